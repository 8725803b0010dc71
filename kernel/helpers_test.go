package kernel

import (
	"bytes"
	"context"
	"crypto/hmac"
	"crypto/rand"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"log/slog"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"github.com/go-zeromq/zmq4"
)

// ---------------------------------------------------------------------------
// Fake engine

// fakeEngine runs cells made of one command per line:
//
//	print TEXT   stream TEXT+"\n" to stdout
//	warn TEXT    stream TEXT+"\n" to stderr
//	show TEXT    display_data with text/plain and text/html
//	value TEXT   the cell's result is TEXT (text/plain)
//	fail         *CellError CheckError
//	plainfail    a plain error
//	slowfail     sleep 150 ms, then *CellError
//	block        wait for ctx, signal started first
//	hang         ignore ctx: wait for release, signal started first
//	panic        panic
//	nan          result bundle that JSON cannot encode
//	flood N      N display_data messages of 1 MiB each
type fakeEngine struct {
	started  chan struct{} // receives when "block" or "hang" begins
	release  chan struct{} // closed to end "hang"
	resets   atomic.Int32
	inFlight atomic.Int32
	overlaps atomic.Int32 // calls that overlapped another call
	executed atomic.Int32
}

func newFakeEngine() *fakeEngine {
	return &fakeEngine{started: make(chan struct{}, 16), release: make(chan struct{})}
}

func (e *fakeEngine) enter() func() {
	if e.inFlight.Add(1) > 1 {
		e.overlaps.Add(1)
	}
	return func() { e.inFlight.Add(-1) }
}

func (e *fakeEngine) Execute(ctx context.Context, code string, sink Sink) (Bundle, error) {
	defer e.enter()()
	e.executed.Add(1)
	var result Bundle
	for _, line := range strings.Split(code, "\n") {
		cmd, arg, _ := strings.Cut(strings.TrimSpace(line), " ")
		switch cmd {
		case "":
		case "print":
			sink.Stream("stdout", arg+"\n")
		case "warn":
			sink.Stream("stderr", arg+"\n")
		case "show":
			sink.Display(Bundle{"text/plain": arg, "text/html": "<b>" + arg + "</b>"})
		case "value":
			result = Bundle{"text/plain": arg}
		case "fail":
			return nil, &CellError{Name: "CheckError", Value: "bad thing", Traceback: []string{"line 1: fail", "     ^"}}
		case "plainfail":
			return nil, errors.New("plain failure")
		case "slowfail":
			time.Sleep(150 * time.Millisecond)
			return nil, &CellError{Name: "CheckError", Value: "slow failure"}
		case "block":
			e.started <- struct{}{}
			<-ctx.Done()
			return nil, ctx.Err()
		case "hang":
			e.started <- struct{}{}
			<-e.release
		case "panic":
			panic("boom in the engine")
		case "flood":
			n, _ := strconv.Atoi(arg)
			big := strings.Repeat("m", 1<<20)
			for i := 0; i < n; i++ {
				sink.Display(Bundle{"text/plain": big})
			}
		case "nan":
			result = Bundle{"application/json": map[string]any{"x": nanValue()}}
		default:
			return nil, &CellError{Name: "SyntaxError", Value: "unknown command " + cmd}
		}
	}
	return result, nil
}

func nanValue() float64 { var z float64; return z / z }

var fakeWords = []string{"shell", "simulate", "slab", "species", "sphere"}

func (e *fakeEngine) Complete(code string, cursor int) Completion {
	defer e.enter()()
	if code == "panic" {
		panic("completion exploded")
	}
	r := []rune(code)[:cursor]
	start := cursor
	for start > 0 && r[start-1] != ' ' && r[start-1] != '\n' {
		start--
	}
	prefix := string(r[start:cursor])
	var m []string
	for _, w := range fakeWords {
		if strings.HasPrefix(w, prefix) {
			m = append(m, w)
		}
	}
	return Completion{Matches: m, CursorStart: start, CursorEnd: cursor}
}

func (e *fakeEngine) Inspect(code string, cursor int, detail int) (Bundle, bool) {
	defer e.enter()()
	if strings.Contains(code, "sphere") {
		return Bundle{"text/plain": fmt.Sprintf("sphere: a spherical body (detail %d)", detail)}, true
	}
	return nil, false
}

func (e *fakeEngine) IsComplete(code string) (string, string) {
	defer e.enter()()
	switch {
	case strings.HasSuffix(strings.TrimSpace(code), ":"):
		return "incomplete", "    "
	case strings.Count(code, "(") < strings.Count(code, ")"):
		return "invalid", ""
	case code == "weird":
		return "perhaps", ""
	}
	return "complete", ""
}

func (e *fakeEngine) Reset() { defer e.enter()(); e.resets.Add(1) }

func (e *fakeEngine) Info() LanguageInfo {
	return LanguageInfo{
		Name: "massline", Version: "0.1.0", MIMEType: "text/x-massline", FileExtension: ".mass",
		Banner: "massline test engine", ImplVersion: "0.1.0-test",
		HelpLinks: []HelpLink{{Text: "massline", URL: "https://example.org/massline"}},
	}
}

// ---------------------------------------------------------------------------
// Log capture

type logBuffer struct {
	mu  sync.Mutex
	buf bytes.Buffer
}

func (l *logBuffer) Write(p []byte) (int, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.buf.Write(p)
}

func (l *logBuffer) String() string {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.buf.String()
}

func (l *logBuffer) count(sub string) int { return strings.Count(l.String(), sub) }

// waitFor polls cond until it holds or d passes.
func waitFor(d time.Duration, cond func() bool) bool {
	deadline := time.Now().Add(d)
	for time.Now().Before(deadline) {
		if cond() {
			return true
		}
		time.Sleep(5 * time.Millisecond)
	}
	return cond()
}

// ---------------------------------------------------------------------------
// Test client: a small Jupyter client of its own (DEALER, SUB, REQ), with
// signing and verification written independently of the kernel's code.

type wmsg struct {
	Header   map[string]any
	Parent   map[string]any
	Metadata map[string]any
	Content  map[string]any
}

func (m *wmsg) Type() string     { s, _ := m.Header["msg_type"].(string); return s }
func (m *wmsg) ParentID() string { s, _ := m.Parent["msg_id"].(string); return s }

type client struct {
	t       testing.TB
	key     []byte
	session string

	ctx     context.Context
	cancel  context.CancelFunc
	shell   zmq4.Socket
	control zmq4.Socket
	stdin   zmq4.Socket
	iopub   zmq4.Socket
	hb      zmq4.Socket

	shellIn   chan *wmsg
	controlIn chan *wmsg

	iomu   sync.Mutex
	iomsgs []*wmsg
	wg     sync.WaitGroup

	closeOnce sync.Once
}

func randHex(n int) string {
	b := make([]byte, n)
	_, _ = rand.Read(b)
	return hex.EncodeToString(b)
}

func dialClient(t testing.TB, conn ConnectionInfo) *client {
	t.Helper()
	ctx, cancel := context.WithCancel(context.Background())
	c := &client{t: t, key: []byte(conn.Key), session: randHex(16), ctx: ctx, cancel: cancel,
		shellIn: make(chan *wmsg, 4096), controlIn: make(chan *wmsg, 4096)}
	id := randHex(8)
	opts := func(name string) []zmq4.Option {
		return []zmq4.Option{zmq4.WithTimeout(5 * time.Second), zmq4.WithID(zmq4.SocketIdentity(name + "-" + id))}
	}
	c.shell = zmq4.NewDealer(ctx, opts("shell")...)
	c.control = zmq4.NewDealer(ctx, opts("control")...)
	c.stdin = zmq4.NewDealer(ctx, opts("stdin")...)
	c.iopub = zmq4.NewSub(ctx, zmq4.WithTimeout(5*time.Second))
	c.hb = zmq4.NewReq(ctx, zmq4.WithTimeout(5*time.Second))
	for _, d := range []struct {
		s    zmq4.Socket
		port int
	}{{c.shell, conn.ShellPort}, {c.control, conn.ControlPort}, {c.stdin, conn.StdinPort}, {c.iopub, conn.IOPubPort}, {c.hb, conn.HBPort}} {
		if err := d.s.Dial(conn.endpoint(d.port)); err != nil {
			t.Fatalf("dial port %d: %v", d.port, err)
		}
	}
	if err := c.iopub.SetOption(zmq4.OptionSubscribe, ""); err != nil {
		t.Fatal(err)
	}
	c.reader(c.shell, func(m *wmsg) { c.shellIn <- m })
	c.reader(c.control, func(m *wmsg) { c.controlIn <- m })
	c.reader(c.iopub, func(m *wmsg) { c.iomu.Lock(); c.iomsgs = append(c.iomsgs, m); c.iomu.Unlock() })
	return c
}

func (c *client) reader(s zmq4.Socket, deliver func(*wmsg)) {
	c.wg.Add(1)
	go func() {
		defer c.wg.Done()
		for {
			m, err := s.Recv()
			if err != nil {
				if c.ctx.Err() != nil {
					return
				}
				continue
			}
			w, err := c.decode(m.Frames)
			if err != nil {
				c.t.Errorf("client: kernel sent a bad message: %v", err)
				continue
			}
			deliver(w)
		}
	}()
}

func (c *client) close() {
	c.closeOnce.Do(c.doClose)
}

func (c *client) doClose() {
	c.cancel()
	for _, s := range []zmq4.Socket{c.shell, c.control, c.stdin, c.iopub, c.hb} {
		_ = s.Close()
	}
	c.wg.Wait()
}

func (c *client) mac(parts ...[]byte) string {
	if len(c.key) == 0 {
		return ""
	}
	h := hmac.New(sha256.New, c.key)
	for _, p := range parts {
		h.Write(p)
	}
	return hex.EncodeToString(h.Sum(nil))
}

func (c *client) decode(frames [][]byte) (*wmsg, error) {
	at := -1
	for i, f := range frames {
		if string(f) == "<IDS|MSG>" {
			at = i
			break
		}
	}
	if at < 0 || len(frames) < at+6 {
		return nil, fmt.Errorf("bad framing: %q", frames)
	}
	f := frames[at+1:]
	if want := c.mac(f[1], f[2], f[3], f[4]); string(f[0]) != want {
		return nil, fmt.Errorf("bad signature %q, want %q", f[0], want)
	}
	var w wmsg
	for i, dst := range []*map[string]any{&w.Header, &w.Parent, &w.Metadata, &w.Content} {
		if err := json.Unmarshal(f[1+i], dst); err != nil {
			return nil, fmt.Errorf("frame %d: %v", i, err)
		}
	}
	return &w, nil
}

// frames builds a signed request; sig replaces the signature when non-nil.
func (c *client) frames(msgType string, content any, sig []byte) (id string, frames [][]byte) {
	id = randHex(16)
	h, _ := json.Marshal(map[string]any{
		"msg_id": id, "session": c.session, "username": "tester", "msg_type": msgType,
		"version": "5.3", "date": time.Now().UTC().Format(time.RFC3339Nano),
	})
	cb, _ := json.Marshal(content)
	p, md := []byte("{}"), []byte("{}")
	s := []byte(c.mac(h, p, md, cb))
	if sig != nil {
		s = sig
	}
	return id, [][]byte{[]byte("<IDS|MSG>"), s, h, p, md, cb}
}

func (c *client) sendRaw(s zmq4.Socket, frames ...[]byte) {
	c.t.Helper()
	if err := s.SendMulti(zmq4.NewMsgFrom(frames...)); err != nil {
		c.t.Fatalf("client send: %v", err)
	}
}

func (c *client) send(s zmq4.Socket, msgType string, content any) string {
	c.t.Helper()
	if content == nil {
		content = map[string]any{}
	}
	id, f := c.frames(msgType, content, nil)
	c.sendRaw(s, f...)
	return id
}

func (c *client) execute(code string) string {
	return c.send(c.shell, "execute_request", map[string]any{
		"code": code, "silent": false, "store_history": true, "user_expressions": map[string]any{},
		"allow_stdin": false, "stop_on_error": true,
	})
}

// reply waits for the reply to msgID on ch.
func (c *client) reply(ch chan *wmsg, msgID string, d time.Duration) *wmsg {
	c.t.Helper()
	timer := time.NewTimer(d)
	defer timer.Stop()
	for {
		select {
		case m := <-ch:
			if m.ParentID() == msgID {
				return m
			}
		case <-timer.C:
			c.t.Fatalf("no reply to %s within %v", msgID, d)
			return nil
		}
	}
}

// noReply asserts that nothing answering msgID arrives on ch within d.
func (c *client) noReply(ch chan *wmsg, msgID string, d time.Duration) {
	c.t.Helper()
	timer := time.NewTimer(d)
	defer timer.Stop()
	for {
		select {
		case m := <-ch:
			if m.ParentID() == msgID {
				c.t.Fatalf("unexpected reply %s to %s", m.Type(), msgID)
			}
		case <-timer.C:
			return
		}
	}
}

// iopubFor returns the iopub messages whose parent is msgID, in order.
func (c *client) iopubFor(msgID string) []*wmsg {
	c.iomu.Lock()
	defer c.iomu.Unlock()
	var out []*wmsg
	for _, m := range c.iomsgs {
		if m.ParentID() == msgID {
			out = append(out, m)
		}
	}
	return out
}

// collect waits for the idle status of msgID and returns everything iopub
// carried for it, busy first and idle last.
func (c *client) collect(msgID string, d time.Duration) []*wmsg {
	c.t.Helper()
	var got []*wmsg
	ok := waitFor(d, func() bool {
		got = c.iopubFor(msgID)
		n := len(got)
		return n > 0 && got[n-1].Type() == "status" && got[n-1].Content["execution_state"] == "idle"
	})
	if !ok {
		c.t.Fatalf("iopub for %s did not reach idle within %v; got %v", msgID, d, types(got))
	}
	return got
}

func (c *client) clearIOPub() {
	c.iomu.Lock()
	c.iomsgs = nil
	c.iomu.Unlock()
}

func types(ms []*wmsg) []string {
	var out []string
	for _, m := range ms {
		t := m.Type()
		if t == "status" {
			t += ":" + fmt.Sprint(m.Content["execution_state"])
		}
		out = append(out, t)
	}
	return out
}

// waitReady sends kernel_info requests until iopub is seen to work (the
// SUB subscription takes a moment to reach the PUB socket).
func (c *client) waitReady() {
	c.t.Helper()
	deadline := time.Now().Add(10 * time.Second)
	for time.Now().Before(deadline) {
		id := c.send(c.shell, "kernel_info_request", nil)
		c.reply(c.shellIn, id, 5*time.Second)
		if waitFor(300*time.Millisecond, func() bool { return len(c.iopubFor(id)) > 0 }) {
			c.clearIOPub()
			return
		}
	}
	c.t.Fatal("iopub never became ready")
}

// ---------------------------------------------------------------------------
// Kernel harness

type harness struct {
	k    *Kernel
	eng  *fakeEngine
	c    *client
	logs *logBuffer
	done chan error
	stop context.CancelFunc
}

func startKernel(t testing.TB, cfg *Config) *harness {
	t.Helper()
	return startKernelOn(t, &ConnectionInfo{IP: "127.0.0.1", Key: "test-key-" + randHex(8)}, cfg)
}

func startKernelOn(t testing.TB, conn *ConnectionInfo, cfg *Config) *harness {
	t.Helper()
	h := &harness{eng: newFakeEngine(), logs: &logBuffer{}, done: make(chan error, 1)}
	if cfg == nil {
		cfg = &Config{}
	}
	if cfg.Logger == nil {
		cfg.Logger = slog.New(slog.NewTextHandler(h.logs, &slog.HandlerOptions{Level: slog.LevelDebug}))
	}
	k, err := New(conn, h.eng, cfg)
	if err != nil {
		t.Fatal(err)
	}
	h.k = k
	ctx, cancel := context.WithCancel(context.Background())
	h.stop = cancel
	go func() { h.done <- k.Run(ctx) }()
	h.c = dialClient(t, k.Connection())
	t.Cleanup(func() {
		h.c.close()
		cancel()
		select {
		case <-h.done:
		case <-time.After(10 * time.Second):
			t.Error("Run did not return after cancel")
		}
		if n := h.eng.overlaps.Load(); n != 0 {
			t.Errorf("engine saw %d overlapping calls", n)
		}
		if t.Failed() {
			t.Logf("kernel log:\n%s", h.logs.String())
		}
	})
	h.c.waitReady()
	return h
}

// waitRun waits for Run to return and reports its error.
func (h *harness) waitRun(t testing.TB, d time.Duration) error {
	t.Helper()
	select {
	case err := <-h.done:
		h.done <- err // keep it for the cleanup
		return err
	case <-time.After(d):
		t.Fatalf("Run did not return within %v", d)
		return nil
	}
}
