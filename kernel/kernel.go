package kernel

import (
	"context"
	"errors"
	"fmt"
	"log/slog"
	"os"
	"runtime/debug"
	"sync"
	"sync/atomic"
	"time"

	"github.com/go-zeromq/zmq4"
)

// DefaultMaxMessageSize is the cap on one incoming message (all its frames
// together) when Config.MaxMessageSize is zero: 64 MiB.
const DefaultMaxMessageSize = 64 << 20

// Config tunes a Kernel. A nil *Config and every zero field mean the
// documented default.
type Config struct {
	// Logger receives one line for every message the kernel ignores and
	// every failure it recovers from. Nil: a text logger on stderr.
	Logger *slog.Logger
	// MaxMessageSize caps one incoming message in bytes; larger messages
	// are discarded unread with a log line. Zero: DefaultMaxMessageSize.
	// Values below 4 KiB are raised to 4 KiB.
	MaxMessageSize int64
	// SendTimeout bounds a blocking socket send, and one network write to
	// a peer: a client that stops reading is disconnected after it rather
	// than stalling the kernel. Zero or negative: 30 s.
	SendTimeout time.Duration
	// HandshakeTimeout bounds the ZeroMQ handshake of a new connection.
	// Zero: 10 s; negative: no bound.
	HandshakeTimeout time.Duration
	// ShutdownGrace is how long Run waits, after a shutdown request, for a
	// running cell to notice its cancelled context. Zero: 2 s.
	ShutdownGrace time.Duration
	// Linger is how long Run keeps the sockets open after the last reply so
	// that queued iopub messages go out. Zero: 100 ms; negative: none.
	Linger time.Duration
	// Username fills the username of outgoing headers. Empty: $USER, or
	// "massline" if that is unset.
	Username string
}

// Kernel serves one Engine over the Jupyter messaging protocol. Create it
// with New, serve with Run.
type Kernel struct {
	conn    ConnectionInfo // ports as bound
	eng     Engine
	info    LanguageInfo // cached at New: Info is never called concurrently
	log     *slog.Logger
	session string
	user    string
	sign    *signer
	grace   time.Duration
	linger  time.Duration

	sockCtx    context.Context
	sockCancel context.CancelFunc
	shell      zmq4.Socket
	control    zmq4.Socket
	stdin      zmq4.Socket
	iopub      zmq4.Socket
	hb         zmq4.Socket
	iopubMu    sync.Mutex // keeps iopub messages in order

	count int // execution count; touched only by the shell worker

	runMu       sync.Mutex
	runCancel   context.CancelFunc // cancels the running cell, if any
	interrupted bool               // the running cell was interrupted

	shutdownOnce sync.Once
	shutdownCh   chan struct{}
	restart      atomic.Bool
	running      atomic.Bool
	closeOnce    sync.Once
	closeErr     error
}

// New binds the kernel's five sockets as conn describes and returns a
// Kernel ready to Run. It fails on an unsupported transport or signature
// scheme, or when a port cannot be bound. Call Close if Run is never called.
func New(conn *ConnectionInfo, eng Engine, cfg *Config) (*Kernel, error) {
	if conn == nil {
		return nil, errors.New("kernel: nil connection info")
	}
	if eng == nil {
		return nil, errors.New("kernel: nil engine")
	}
	if cfg == nil {
		cfg = &Config{}
	}
	c := *conn
	if err := c.normalise(); err != nil {
		return nil, err
	}
	if err := registerTransports(); err != nil {
		return nil, fmt.Errorf("kernel: %w", err)
	}
	k := &Kernel{
		eng:        eng,
		log:        cfg.Logger,
		session:    newID(),
		user:       cfg.Username,
		sign:       newSigner(c.Key),
		grace:      orDefault(cfg.ShutdownGrace, 2*time.Second),
		linger:     orDefault(cfg.Linger, 100*time.Millisecond),
		shutdownCh: make(chan struct{}),
	}
	if k.log == nil {
		k.log = slog.New(slog.NewTextHandler(os.Stderr, nil))
	}
	if k.user == "" {
		k.user = os.Getenv("USER")
	}
	if k.user == "" {
		k.user = "massline"
	}
	info, err := k.engineInfo()
	if err != nil {
		return nil, err
	}
	k.info = info

	maxMsg := cfg.MaxMessageSize
	if maxMsg == 0 {
		maxMsg = DefaultMaxMessageSize
	}
	maxMsg = max(maxMsg, minFrameCap)
	timeout := cfg.SendTimeout
	if timeout <= 0 {
		timeout = 30 * time.Second
	}
	set := guardSettings{
		maxMessage: uint64(min(maxMsg, maxFrameCap)),
		handshake:  orDefault(cfg.HandshakeTimeout, 10*time.Second),
		write:      timeout,
		log:        k.log,
	}
	zlog := slog.NewLogLogger(k.log.Handler(), slog.LevelWarn)
	k.sockCtx, k.sockCancel = context.WithCancel(context.Background())

	type spec struct {
		name string
		port *int
		mk   func(context.Context, ...zmq4.Option) zmq4.Socket
		dst  *zmq4.Socket
	}
	specs := []spec{
		{"shell", &c.ShellPort, zmq4.NewRouter, &k.shell},
		{"control", &c.ControlPort, zmq4.NewRouter, &k.control},
		{"stdin", &c.StdinPort, zmq4.NewRouter, &k.stdin},
		{"iopub", &c.IOPubPort, zmq4.NewPub, &k.iopub},
		{"hb", &c.HBPort, zmq4.NewRep, &k.hb},
	}
	for _, s := range specs {
		set.socket = s.name
		ctx := context.WithValue(k.sockCtx, guardKey{}, set)
		sock := s.mk(ctx, zmq4.WithTimeout(timeout), zmq4.WithLogger(zlog))
		*s.dst = sock
		if err := bind(sock, &c, s.port); err != nil {
			_ = k.Close()
			return nil, fmt.Errorf("kernel: binding %s socket: %w", s.name, err)
		}
	}
	k.conn = c
	return k, nil
}

// bind listens on the socket's endpoint, choosing a port when it is 0.
func bind(sock zmq4.Socket, c *ConnectionInfo, port *int) error {
	if c.Transport == "ipc" {
		if *port == 0 {
			*port = freeIPCPort(c.IP)
		}
		return sock.Listen(ipcScheme + "://" + c.IP + "-" + fmt.Sprint(*port))
	}
	ep := c.endpoint(*port)
	if err := sock.Listen(tcpScheme + ep[len("tcp"):]); err != nil {
		return err
	}
	if *port == 0 {
		p, err := portOf(sock.Addr())
		if err != nil {
			return err
		}
		*port = p
	}
	return nil
}

var ipcMu sync.Mutex

// freeIPCPort picks the smallest number whose ipc path does not exist.
func freeIPCPort(prefix string) int {
	ipcMu.Lock()
	defer ipcMu.Unlock()
	for p := 1; ; p++ {
		if _, err := os.Stat(fmt.Sprintf("%s-%d", prefix, p)); errors.Is(err, os.ErrNotExist) {
			return p
		}
	}
}

func orDefault(d, def time.Duration) time.Duration {
	if d == 0 {
		return def
	}
	if d < 0 {
		return 0
	}
	return d
}

// Connection returns the connection information with the ports actually
// bound (useful when New was given port 0).
func (k *Kernel) Connection() ConnectionInfo { return k.conn }

// Session returns the session id written into every header the kernel sends.
func (k *Kernel) Session() string { return k.session }

// RestartRequested reports whether Run ended on a shutdown_request with
// restart set. Jupyter restarts a kernel by starting a new process, so the
// caller should simply exit.
func (k *Kernel) RestartRequested() bool { return k.restart.Load() }

// Interrupt cancels the context of the running cell, if any. It is what an
// interrupt_request does, and what a SIGINT handler should call.
func (k *Kernel) Interrupt() {
	k.runMu.Lock()
	defer k.runMu.Unlock()
	if k.runCancel != nil {
		k.interrupted = true
		k.runCancel()
		k.log.Info("kernel: interrupting the running cell")
	}
}

// Close closes the sockets. Run calls it on the way out; it is safe to call
// more than once.
func (k *Kernel) Close() error {
	k.closeOnce.Do(func() {
		if k.sockCancel != nil {
			k.sockCancel()
		}
		for _, s := range []zmq4.Socket{k.shell, k.control, k.stdin, k.iopub, k.hb} {
			if s != nil {
				if err := s.Close(); err != nil && k.closeErr == nil {
					k.closeErr = err
				}
			}
		}
	})
	return k.closeErr
}

// requestShutdown makes Run return.
func (k *Kernel) requestShutdown(restart bool) {
	k.shutdownOnce.Do(func() {
		k.restart.Store(restart)
		close(k.shutdownCh)
	})
}

// Run serves requests until a shutdown_request arrives (Run returns nil) or
// ctx is done (Run returns ctx.Err()). On the way out it cancels a running
// cell, waits up to Config.ShutdownGrace for it, calls Engine.Reset when a
// restart was requested, and closes the sockets. Run may be called once.
func (k *Kernel) Run(ctx context.Context) error {
	if !k.running.CompareAndSwap(false, true) {
		return errors.New("kernel: Run called twice")
	}
	if k.sockCtx.Err() != nil {
		return errors.New("kernel: Run after Close")
	}
	defer k.Close()
	runCtx, cancel := context.WithCancel(ctx)
	defer cancel()

	_ = k.publish(nil, "status", statusContent{"starting"})

	var loops sync.WaitGroup
	shellQ := make(chan [][]byte, 64)
	stop := make(chan struct{})
	loops.Add(4)
	go func() { defer loops.Done(); k.recvLoop(k.shell, "shell", shellQ, stop) }()
	go func() { defer loops.Done(); k.controlLoop(stop) }()
	go func() { defer loops.Done(); k.stdinLoop() }()
	go func() { defer loops.Done(); k.heartbeatLoop() }()
	worker := make(chan struct{})
	go func() { defer close(worker); k.shellWorker(runCtx, shellQ, stop) }()

	var err error
	select {
	case <-ctx.Done():
		err = ctx.Err()
	case <-k.shutdownCh:
	}
	close(stop)
	k.Interrupt()
	workerDone := true
	select {
	case <-worker:
	case <-time.After(k.grace):
		workerDone = false
		k.log.Warn("kernel: the running cell did not stop within the shutdown grace period", "grace", k.grace)
	}
	if k.RestartRequested() && workerDone {
		if perr := k.guard(func() { k.eng.Reset() }); perr != nil {
			k.log.Error("kernel: Engine.Reset failed", "err", perr)
		}
	}
	if k.linger > 0 {
		time.Sleep(k.linger)
	}
	_ = k.Close()
	loops.Wait()
	return err
}

// recvLoop reads a socket and hands frames to out until the socket closes.
func (k *Kernel) recvLoop(sock zmq4.Socket, name string, out chan<- [][]byte, stop <-chan struct{}) {
	for {
		m, err := sock.Recv()
		if err != nil {
			if k.sockCtx.Err() != nil {
				return
			}
			k.log.Warn("kernel: receive failed", "socket", name, "err", err)
			time.Sleep(10 * time.Millisecond)
			continue
		}
		select {
		case out <- m.Frames:
		case <-stop:
			return
		}
	}
}

// shellWorker handles shell requests one at a time, in order.
func (k *Kernel) shellWorker(ctx context.Context, in <-chan [][]byte, stop <-chan struct{}) {
	for {
		select {
		case <-stop:
			return
		case frames := <-in:
			if pending := k.handleShell(ctx, frames, in); len(pending) > 0 {
				k.abortQueued(ctx, pending)
			}
		}
		select {
		case <-stop:
			return
		default:
		}
	}
}

// controlLoop handles control requests as they come, concurrently with the
// shell worker, so that interrupt and shutdown work while a cell runs.
func (k *Kernel) controlLoop(stop <-chan struct{}) {
	for {
		m, err := k.control.Recv()
		if err != nil {
			if k.sockCtx.Err() != nil {
				return
			}
			k.log.Warn("kernel: receive failed", "socket", "control", "err", err)
			time.Sleep(10 * time.Millisecond)
			continue
		}
		select {
		case <-stop:
			return
		default:
		}
		k.handleControl(m.Frames)
	}
}

// stdinLoop drains the stdin socket: the language never asks for input, so
// an input_reply has nothing to answer.
func (k *Kernel) stdinLoop() {
	for {
		m, err := k.stdin.Recv()
		if err != nil {
			if k.sockCtx.Err() != nil {
				return
			}
			time.Sleep(10 * time.Millisecond)
			continue
		}
		k.log.Debug("kernel: ignoring a message on stdin", "frames", len(m.Frames))
	}
}

// heartbeatLoop echoes every heartbeat message back unchanged.
func (k *Kernel) heartbeatLoop() {
	for {
		m, err := k.hb.Recv()
		if err != nil {
			if k.sockCtx.Err() != nil {
				return
			}
			k.log.Debug("kernel: heartbeat receive failed", "err", err)
			time.Sleep(10 * time.Millisecond)
			continue
		}
		if err := k.hb.Send(m); err != nil && k.sockCtx.Err() == nil {
			k.log.Warn("kernel: heartbeat echo failed", "err", err)
		}
	}
}

// guard runs f, turning a panic into an error and logging its stack.
func (k *Kernel) guard(f func()) (err error) {
	defer func() {
		if r := recover(); r != nil {
			k.log.Error("kernel: recovered from a panic in the engine", "panic", fmt.Sprint(r), "stack", string(debug.Stack()))
			err = &CellError{
				Name:      "InternalError",
				Value:     fmt.Sprintf("the engine failed unexpectedly: %v", r),
				Traceback: []string{fmt.Sprintf("InternalError: the engine failed unexpectedly: %v", r), "(this is a bug in massline; the kernel log has the details)"},
			}
		}
	}()
	f()
	return nil
}

func (k *Kernel) engineInfo() (LanguageInfo, error) {
	var info LanguageInfo
	if err := k.guard(func() { info = k.eng.Info() }); err != nil {
		return info, fmt.Errorf("kernel: Engine.Info: %w", err)
	}
	return info, nil
}
