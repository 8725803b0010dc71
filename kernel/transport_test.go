package kernel

import (
	"bytes"
	"errors"
	"io"
	"log/slog"
	"net"
	"strings"
	"testing"
	"time"
)

// streamConn is a net.Conn reading from a fixed byte stream.
type streamConn struct {
	net.Conn
	r         *bytes.Reader
	deadlines []time.Time
}

func (s *streamConn) Read(p []byte) (int, error) { return s.r.Read(p) }
func (s *streamConn) SetReadDeadline(t time.Time) error {
	s.deadlines = append(s.deadlines, t)
	return nil
}
func (s *streamConn) RemoteAddr() net.Addr               { return nil }
func (s *streamConn) Write(p []byte) (int, error)        { return len(p), nil }
func (s *streamConn) Close() error                       { return nil }
func (s *streamConn) SetDeadline(t time.Time) error      { return nil }
func (s *streamConn) SetWriteDeadline(t time.Time) error { return nil }

func frame(flag byte, body []byte) []byte {
	if len(body) > 255 {
		return append(longHeader(flag|flagLong, uint64(len(body))), body...)
	}
	return append([]byte{flag, byte(len(body))}, body...)
}

func guardRead(t *testing.T, capBytes uint64, stream []byte) ([]byte, *streamConn, *logBuffer, error) {
	t.Helper()
	logs := &logBuffer{}
	sc := &streamConn{r: bytes.NewReader(stream)}
	g := newGuardConn(sc, guardSettings{maxMessage: capBytes, handshake: time.Second, log: slog.New(slog.NewTextHandler(logs, nil)), socket: "test"})
	var out bytes.Buffer
	// Read in odd-sized pieces, as a real reader might.
	buf := make([]byte, 7)
	for {
		n, err := g.Read(buf)
		out.Write(buf[:n])
		if err != nil {
			if errors.Is(err, io.EOF) {
				err = nil
			}
			return out.Bytes(), sc, logs, err
		}
	}
}

func TestGuardPassesNormalTraffic(t *testing.T) {
	var in []byte
	in = append(in, greeting()...)
	in = append(in, readyCommand("DEALER")...)
	in = append(in, frame(flagMore, []byte("<IDS|MSG>"))...)
	in = append(in, frame(flagMore, []byte(strings.Repeat("s", 64)))...)
	in = append(in, frame(0, []byte(strings.Repeat("c", 1000)))...)
	in = append(in, frame(0, nil)...)
	out, sc, _, err := guardRead(t, 4096, in)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(out, in) {
		t.Errorf("stream altered: %d bytes in, %d out", len(in), len(out))
	}
	// A deadline was set for the handshake and cleared after the READY command.
	if len(sc.deadlines) != 2 || sc.deadlines[0].IsZero() || !sc.deadlines[1].IsZero() {
		t.Errorf("deadlines = %v, want one set then cleared", sc.deadlines)
	}
}

func TestGuardEmptiesOversizedMessage(t *testing.T) {
	head := append(greeting(), readyCommand("DEALER")...)
	var in []byte
	in = append(in, head...)
	// Message 1: three frames totalling more than the cap of 4096.
	in = append(in, frame(flagMore, []byte("<IDS|MSG>"))...)
	in = append(in, frame(flagMore, bytes.Repeat([]byte("a"), 3000))...)
	in = append(in, frame(0, bytes.Repeat([]byte("b"), 3000))...)
	// Message 2: fits.
	in = append(in, frame(0, []byte("next"))...)
	out, _, logs, err := guardRead(t, 4096, in)
	if err != nil {
		t.Fatal(err)
	}
	var want []byte
	want = append(want, head...)
	want = append(want, frame(flagMore, []byte("<IDS|MSG>"))...)
	want = append(want, frame(flagMore, bytes.Repeat([]byte("a"), 3000))...)
	want = append(want, frame(0, nil)...) // the frame crossing the cap, emptied
	want = append(want, frame(0, []byte("next"))...)
	if !bytes.Equal(out, want) {
		t.Errorf("got %d bytes, want %d", len(out), len(want))
	}
	if logs.count("over the size cap") != 1 {
		t.Errorf("log: %s", logs)
	}
}

func TestGuardRefusesBadFraming(t *testing.T) {
	head := greeting()
	for name, tail := range map[string][]byte{
		"huge command":   longHeader(flagCommand|flagLong, 1<<40),
		"reserved flags": {0x80, 0},
	} {
		_, _, _, err := guardRead(t, 4096, append(append([]byte{}, head...), tail...))
		if !errors.Is(err, errFrame) {
			t.Errorf("%s: err = %v, want errFrame", name, err)
		}
	}
	// A frame declaring 2^62 bytes is skipped without allocating: the
	// reader sees an empty frame, then the stream simply ends.
	in := append(append([]byte{}, head...), readyCommand("DEALER")...)
	in = append(in, longHeader(flagLong, 1<<62)...)
	out, _, _, err := guardRead(t, 4096, in)
	if err != nil {
		t.Fatal(err)
	}
	if tail := out[len(out)-2:]; tail[0] != 0 || tail[1] != 0 {
		t.Errorf("huge frame header rewritten to %x, want 0000", tail)
	}
}

func FuzzGuard(f *testing.F) {
	f.Add(append(greeting(), readyCommand("DEALER")...))
	f.Add(append(greeting(), longHeader(flagLong|flagMore, 1<<62)...))
	f.Fuzz(func(t *testing.T, data []byte) {
		sc := &streamConn{r: bytes.NewReader(data)}
		g := newGuardConn(sc, guardSettings{maxMessage: 4096, log: slog.New(slog.NewTextHandler(io.Discard, nil))})
		n, _ := io.Copy(io.Discard, struct{ io.Reader }{g})
		if n > int64(len(data)) {
			t.Errorf("guard produced %d bytes from %d", n, len(data))
		}
	})
}
