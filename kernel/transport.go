package kernel

import (
	"context"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"log/slog"
	"net"
	"sync"
	"time"

	"github.com/go-zeromq/zmq4"
	"github.com/go-zeromq/zmq4/transport"
)

// The zmq4 library allocates a frame's body from the size its header
// declares, before reading it; a peer declaring an enormous frame would
// crash or exhaust the process. The kernel therefore listens through its
// own transports ("massline-tcp", "massline-ipc") which wrap every accepted
// connection in a guard that parses the ZMTP 3 framing as it passes:
//
//   - a message (all frames with the MORE flag, and the last one) whose
//     declared total exceeds the cap is delivered with the offending and the
//     following frames emptied; their bodies are read and thrown away
//     without being stored, so the connection survives and the kernel sees
//     a malformed message that it ignores with a log line;
//   - a command frame over commandCap closes the connection;
//   - the ZMTP handshake (greeting and first command) must arrive within the
//     handshake timeout, so a silent peer cannot hold up the accept loop;
//   - every write has a deadline, so a peer that stops reading is dropped
//     instead of blocking the socket (zmq4 writes without one).
//
// Settings travel in the context given to the zmq4 socket constructor.

const (
	tcpScheme    = "massline-tcp"
	ipcScheme    = "massline-ipc"
	greetingLen  = 64        // ZMTP 3.x greeting
	commandCap   = 64 << 10  // READY, SUBSCRIBE, PING: all small
	flagMore     = 0x01      // frame flag: more frames follow
	flagLong     = 0x02      // frame flag: 8-byte size
	flagCommand  = 0x04      // frame flag: command frame
	flagReserved = 0xf8      // must be zero
	discardChunk = 32 << 10  // read size when discarding a body
	minFrameCap  = 4 << 10   // smallest message cap accepted
	maxFrameCap  = 1<<62 - 1 // guard against overflow in sums
)

// guardSettings configures the framing guard for one socket.
type guardSettings struct {
	maxMessage uint64
	handshake  time.Duration
	write      time.Duration // deadline for one write; 0: none
	log        *slog.Logger
	socket     string // channel name, for log lines
}

type guardKey struct{}

var registerOnce sync.Once
var registerErr error

// registerTransports installs the guarded transports in zmq4 (once).
func registerTransports() error {
	registerOnce.Do(func() {
		if err := zmq4.RegisterTransport(tcpScheme, guardTransport{inner: transport.New("tcp")}); err != nil {
			registerErr = err
			return
		}
		registerErr = zmq4.RegisterTransport(ipcScheme, guardTransport{inner: transport.New("unix")})
	})
	return registerErr
}

// guardTransport wraps a net-based zmq4 transport.
type guardTransport struct {
	inner transport.Transport
}

func settingsFrom(ctx context.Context) guardSettings {
	if g, ok := ctx.Value(guardKey{}).(guardSettings); ok {
		return g
	}
	return guardSettings{maxMessage: DefaultMaxMessageSize, handshake: 10 * time.Second, log: slog.Default()}
}

// Dial implements transport.Transport.
func (t guardTransport) Dial(ctx context.Context, d transport.Dialer, addr string) (net.Conn, error) {
	c, err := t.inner.Dial(ctx, d, addr)
	if err != nil {
		return nil, err
	}
	return newGuardConn(c, settingsFrom(ctx)), nil
}

// Listen implements transport.Transport.
func (t guardTransport) Listen(ctx context.Context, addr string) (net.Listener, error) {
	l, err := t.inner.Listen(ctx, addr)
	if err != nil {
		return nil, err
	}
	return guardListener{Listener: l, set: settingsFrom(ctx)}, nil
}

// Addr implements transport.Transport.
func (t guardTransport) Addr(ep string) (string, error) { return t.inner.Addr(ep) }

type guardListener struct {
	net.Listener
	set guardSettings
}

// Accept wraps each connection in a guard.
func (l guardListener) Accept() (net.Conn, error) {
	c, err := l.Listener.Accept()
	if err != nil {
		return nil, err
	}
	return newGuardConn(c, l.set), nil
}

// guardConn is a net.Conn whose Read passes ZMTP traffic through, rewriting
// oversized messages as described above.
type guardConn struct {
	net.Conn
	set guardSettings

	greetLeft   int    // greeting bytes still to pass through
	bodyLeft    uint64 // body bytes of the current frame to pass through
	skipLeft    uint64 // body bytes of the current frame to discard
	msgTotal    uint64 // bytes of the current message so far
	dropping    bool   // the current message went over the cap
	handshaking bool   // read deadline set until the first command is read
	clearAtEnd  bool   // clear the deadline when the body ends
	hdr         [9]byte
	pending     []byte // header bytes to hand to the reader
	scratch     []byte
}

func newGuardConn(c net.Conn, set guardSettings) *guardConn {
	g := &guardConn{Conn: c, set: set, greetLeft: greetingLen}
	if set.handshake > 0 {
		_ = c.SetReadDeadline(time.Now().Add(set.handshake))
		g.handshaking = true
	}
	return g
}

// errFrame reports framing the guard refuses; the connection is closed.
var errFrame = errors.New("kernel: invalid ZMTP frame")

// Read implements io.Reader over the guarded stream.
func (g *guardConn) Read(p []byte) (int, error) {
	if len(p) == 0 {
		return 0, nil
	}
	for {
		switch {
		case len(g.pending) > 0:
			n := copy(p, g.pending)
			g.pending = g.pending[n:]
			return n, nil
		case g.greetLeft > 0:
			n, err := g.Conn.Read(p[:min(len(p), g.greetLeft)])
			g.greetLeft -= n
			return n, err
		case g.bodyLeft > 0:
			n, err := g.Conn.Read(p[:min(uint64(len(p)), g.bodyLeft)])
			g.bodyLeft -= uint64(n)
			if g.bodyLeft == 0 && g.clearAtEnd {
				g.endHandshake()
			}
			return n, err
		case g.skipLeft > 0:
			if g.scratch == nil {
				g.scratch = make([]byte, discardChunk)
			}
			n, err := g.Conn.Read(g.scratch[:min(uint64(len(g.scratch)), g.skipLeft)])
			g.skipLeft -= uint64(n)
			if err != nil {
				return 0, err
			}
		default:
			if err := g.readHeader(); err != nil {
				return 0, err
			}
		}
	}
}

func (g *guardConn) endHandshake() {
	g.clearAtEnd = false
	if g.handshaking {
		g.handshaking = false
		_ = g.Conn.SetReadDeadline(time.Time{})
	}
}

// readHeader reads one frame header and decides what to do with the body.
func (g *guardConn) readHeader() error {
	if _, err := io.ReadFull(g.Conn, g.hdr[:2]); err != nil {
		return err
	}
	flag := g.hdr[0]
	if flag&flagReserved != 0 {
		return fmt.Errorf("%w: reserved flag bits set (0x%02x)", errFrame, flag)
	}
	hlen := 2
	size := uint64(g.hdr[1])
	if flag&flagLong != 0 {
		if _, err := io.ReadFull(g.Conn, g.hdr[2:9]); err != nil {
			return err
		}
		hlen = 9
		size = binary.BigEndian.Uint64(g.hdr[1:9])
	}
	if flag&flagCommand != 0 {
		if size > commandCap {
			g.set.log.Warn("kernel: closing connection: oversized ZMTP command",
				"socket", g.set.socket, "declared_bytes", size, "remote", g.remote())
			return fmt.Errorf("%w: command of %d bytes", errFrame, size)
		}
		g.pending = g.hdr[:hlen]
		g.bodyLeft = size
		if g.handshaking {
			if size == 0 {
				g.endHandshake()
			} else {
				g.clearAtEnd = true
			}
		}
		return nil
	}
	limit := g.set.maxMessage
	over := g.dropping || size > limit || g.msgTotal+size > limit
	if over {
		if !g.dropping {
			g.set.log.Warn("kernel: discarding message over the size cap",
				"socket", g.set.socket, "frame_bytes", size, "cap_bytes", limit, "remote", g.remote())
		}
		g.dropping = true
		// Hand over an empty frame with the same MORE flag; discard the body.
		g.hdr[0] = flag &^ flagLong
		g.hdr[1] = 0
		g.pending = g.hdr[:2]
		g.skipLeft = size
	} else {
		g.msgTotal += size
		g.pending = g.hdr[:hlen]
		g.bodyLeft = size
	}
	if flag&flagMore == 0 {
		g.msgTotal = 0
		g.dropping = false
	}
	return nil
}

// Write implements io.Writer with the write deadline applied.
func (g *guardConn) Write(p []byte) (int, error) {
	if g.set.write > 0 {
		_ = g.Conn.SetWriteDeadline(time.Now().Add(g.set.write))
	}
	n, err := g.Conn.Write(p)
	var ne net.Error
	if err != nil && errors.As(err, &ne) && ne.Timeout() {
		// zmq4 keeps a connection after a timeout and would wait again on
		// every message: close it, and report a non-timeout error so
		// that zmq4 forgets the connection.
		g.set.log.Warn("kernel: dropping a peer that stopped reading", "socket", g.set.socket, "remote", g.remote())
		_ = g.Conn.Close()
		err = &net.OpError{Op: "write", Net: "tcp", Err: net.ErrClosed}
	}
	return n, err
}

func (g *guardConn) remote() string {
	if a := g.Conn.RemoteAddr(); a != nil {
		return a.String()
	}
	return ""
}
