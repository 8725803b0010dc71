// Package kernel serves a massline Engine to Jupyter as a notebook kernel.
//
// It implements the Jupyter messaging protocol 5.3 over ZeroMQ (the pure-Go
// github.com/go-zeromq/zmq4): shell, control and stdin ROUTER sockets, an
// iopub PUB socket and a heartbeat REP socket, bound as a connection file
// (LoadConnection) says. Every incoming message is checked against the
// connection key with HMAC-SHA256 (constant-time compare, replayed
// signatures refused); wrongly signed, malformed, oversized and unknown
// messages are ignored with a log line, and the kernel only stops on a
// shutdown_request or when Run's context ends.
//
// The language itself lives behind the Engine interface (engine.go). The
// kernel owns the protocol: execution counting, busy/idle status around
// every request, execute_input, stream and display_data output through a
// Sink, execute_result for a cell's value, error messages from *CellError,
// completion, inspection and is_complete replies. Shell requests run one at
// a time, in order; control requests are served concurrently, so an
// interrupt_request (or Kernel.Interrupt, for SIGINT) cancels the context of
// the running cell while it runs. A panic inside the Engine becomes an error
// reply.
//
// Kernelspecs: WriteKernelSpec writes kernel.json and two logos into a
// directory; InstallKernelSpec, RemoveKernelSpec and ListKernelSpecs work
// with Jupyter's data directories.
//
// Typical use from a command:
//
//	conn, err := kernel.LoadConnection(path)
//	...
//	k, err := kernel.New(conn, engine, nil)
//	...
//	go func() { for range sigint { k.Interrupt() } }()
//	err = k.Run(ctx)
package kernel
