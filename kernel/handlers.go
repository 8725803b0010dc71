package kernel

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"sync"
	"unicode/utf8"

	"github.com/go-zeromq/zmq4"
)

// Content of the messages the kernel sends. Field names follow the Jupyter
// messaging protocol 5.3.

type statusContent struct {
	ExecutionState string `json:"execution_state"`
}

type streamContent struct {
	Name string `json:"name"`
	Text string `json:"text"`
}

type displayContent struct {
	Data      Bundle   `json:"data"`
	Metadata  struct{} `json:"metadata"`
	Transient struct{} `json:"transient"`
}

type resultContent struct {
	ExecutionCount int      `json:"execution_count"`
	Data           Bundle   `json:"data"`
	Metadata       struct{} `json:"metadata"`
}

type inputContent struct {
	Code           string `json:"code"`
	ExecutionCount int    `json:"execution_count"`
}

type errorContent struct {
	EName     string   `json:"ename"`
	EValue    string   `json:"evalue"`
	Traceback []string `json:"traceback"`
}

type errorReply struct {
	Status         string   `json:"status"`
	ExecutionCount *int     `json:"execution_count,omitempty"`
	EName          string   `json:"ename"`
	EValue         string   `json:"evalue"`
	Traceback      []string `json:"traceback"`
}

type executeOK struct {
	Status          string   `json:"status"`
	ExecutionCount  int      `json:"execution_count"`
	UserExpressions struct{} `json:"user_expressions"`
	Payload         []any    `json:"payload"`
}

type kernelInfoContent struct {
	Status                string         `json:"status"`
	ProtocolVersion       string         `json:"protocol_version"`
	Implementation        string         `json:"implementation"`
	ImplementationVersion string         `json:"implementation_version"`
	LanguageInfo          languageJSON   `json:"language_info"`
	Banner                string         `json:"banner"`
	HelpLinks             []helpLinkJSON `json:"help_links"`
}

type languageJSON struct {
	Name          string `json:"name"`
	Version       string `json:"version"`
	MIMEType      string `json:"mimetype"`
	FileExtension string `json:"file_extension"`
	PygmentsLexer string `json:"pygments_lexer,omitempty"`
}

type helpLinkJSON struct {
	Text string `json:"text"`
	URL  string `json:"url"`
}

type completeContent struct {
	Status      string   `json:"status"`
	Matches     []string `json:"matches"`
	CursorStart int      `json:"cursor_start"`
	CursorEnd   int      `json:"cursor_end"`
	Metadata    struct{} `json:"metadata"`
}

type inspectContent struct {
	Status   string   `json:"status"`
	Found    bool     `json:"found"`
	Data     Bundle   `json:"data"`
	Metadata struct{} `json:"metadata"`
}

type isCompleteContent struct {
	Status string  `json:"status"`
	Indent *string `json:"indent,omitempty"`
}

type shutdownContent struct {
	Status  string `json:"status"`
	Restart bool   `json:"restart"`
}

// Implementation is the kernel_info_reply "implementation" field.
const Implementation = "massline"

func (k *Kernel) newHeader(msgType string) header {
	return header{
		MsgID:    newID(),
		Session:  k.session,
		Username: k.user,
		Date:     isoNow(),
		MsgType:  msgType,
		Version:  ProtocolVersion,
	}
}

// publish sends one message on iopub, the topic being its type.
func (k *Kernel) publish(parent []byte, msgType string, content any) error {
	frames, err := encode([][]byte{[]byte(msgType)}, k.sign, k.newHeader(msgType), parent, content)
	if err != nil {
		k.log.Error("kernel: cannot encode iopub message", "msg_type", msgType, "err", err)
		return err
	}
	k.iopubMu.Lock()
	defer k.iopubMu.Unlock()
	if err := k.iopub.SendMulti(zmq4.NewMsgFrom(frames...)); err != nil {
		if k.sockCtx.Err() == nil {
			k.log.Warn("kernel: iopub send failed", "msg_type", msgType, "err", err)
		}
		return err
	}
	return nil
}

// publishBundle publishes a message carrying a MIME bundle; a bundle that
// cannot be encoded as JSON is replaced by a text/plain explanation.
func (k *Kernel) publishBundle(parent []byte, msgType string, b Bundle, wrap func(Bundle) any) {
	if _, err := marshal(b); err != nil {
		k.log.Error("kernel: output bundle is not JSON-encodable", "msg_type", msgType, "err", err)
		b = Bundle{"text/plain": fmt.Sprintf("(this output could not be encoded as JSON: %v)", err)}
	}
	_ = k.publish(parent, msgType, wrap(b))
}

// reply answers req on sock (shell or control).
func (k *Kernel) reply(sock zmq4.Socket, req *message, msgType string, content any) {
	frames, err := encode(req.ids, k.sign, k.newHeader(msgType), req.rawHeader, content)
	if err != nil {
		k.log.Error("kernel: cannot encode reply", "msg_type", msgType, "err", err)
		frames, err = encode(req.ids, k.sign, k.newHeader(msgType), req.rawHeader,
			errorReply{Status: "error", EName: "InternalError", EValue: err.Error(), Traceback: []string{}})
		if err != nil {
			return
		}
	}
	if len(req.ids) == 0 {
		k.log.Warn("kernel: request has no routing identity; reply dropped", "msg_type", msgType)
		return
	}
	if err := sock.SendMulti(zmq4.NewMsgFrom(frames...)); err != nil && k.sockCtx.Err() == nil {
		k.log.Warn("kernel: reply send failed", "msg_type", msgType, "err", err)
	}
}

// replyError answers req with status "error".
func (k *Kernel) replyError(sock zmq4.Socket, req *message, msgType string, ce *CellError) {
	k.reply(sock, req, msgType, errorReply{Status: "error", EName: ce.Name, EValue: ce.Value, Traceback: nonNil(ce.Traceback)})
}

func nonNil(s []string) []string {
	if s == nil {
		return []string{}
	}
	return s
}

// replyType maps "x_request" to "x_reply".
func replyType(reqType string) string {
	const suffix = "_request"
	if len(reqType) > len(suffix) && reqType[len(reqType)-len(suffix):] == suffix {
		return reqType[:len(reqType)-len(suffix)] + "_reply"
	}
	return reqType + "_reply"
}

func badRequest(m *message, err error) *CellError {
	v := fmt.Sprintf("invalid %s content: %v", m.header.MsgType, err)
	return &CellError{Name: "BadRequest", Value: v, Traceback: []string{"BadRequest: " + v}}
}

// handleShell decodes and answers one shell message. When a cell fails
// with stop_on_error, it returns the requests that were already waiting
// in queue at that moment, to be aborted.
func (k *Kernel) handleShell(ctx context.Context, frames [][]byte, queue <-chan [][]byte) (aborted [][][]byte) {
	m, err := decode(frames, k.sign)
	if err != nil {
		k.log.Warn("kernel: ignoring a message", "socket", "shell", "reason", err.Error(), "frames", len(frames))
		return nil
	}
	return k.dispatchShell(ctx, m, queue)
}

// dispatchShell answers one decoded shell message between busy and idle.
func (k *Kernel) dispatchShell(ctx context.Context, m *message, queue <-chan [][]byte) (aborted [][][]byte) {
	_ = k.publish(m.rawHeader, "status", statusContent{"busy"})
	defer func() { _ = k.publish(m.rawHeader, "status", statusContent{"idle"}) }()

	switch t := m.header.MsgType; t {
	case "execute_request":
		return k.execute(ctx, m, queue)
	case "kernel_info_request":
		k.reply(k.shell, m, "kernel_info_reply", k.kernelInfo())
	case "complete_request":
		k.complete(m)
	case "inspect_request":
		k.inspect(m)
	case "is_complete_request":
		k.isComplete(m)
	case "history_request":
		k.reply(k.shell, m, "history_reply", struct {
			Status  string `json:"status"`
			History []any  `json:"history"`
		}{"ok", []any{}})
	case "comm_info_request":
		k.reply(k.shell, m, "comm_info_reply", struct {
			Status string   `json:"status"`
			Comms  struct{} `json:"comms"`
		}{Status: "ok"})
	case "shutdown_request":
		k.shutdown(k.shell, m)
	case "comm_open":
		// No comm targets exist: the protocol asks for an immediate close.
		var c struct {
			CommID string `json:"comm_id"`
		}
		_ = json.Unmarshal(m.content, &c)
		_ = k.publish(m.rawHeader, "comm_close", struct {
			CommID string   `json:"comm_id"`
			Data   struct{} `json:"data"`
		}{CommID: c.CommID})
	case "comm_msg", "comm_close":
		k.log.Debug("kernel: ignoring a comm message (no comms are open)", "msg_type", t)
	default:
		k.log.Warn("kernel: ignoring an unknown message type", "socket", "shell", "msg_type", t)
	}
	return nil
}

// takeQueued removes and returns the requests already waiting in queue.
func takeQueued(queue <-chan [][]byte) [][][]byte {
	var out [][][]byte
	for {
		select {
		case f := <-queue:
			out = append(out, f)
		default:
			return out
		}
	}
}

// abortQueued answers the execute requests in pending with an error reply
// instead of running them (stop_on_error); other requests are handled
// normally, in order.
func (k *Kernel) abortQueued(ctx context.Context, pending [][][]byte) {
	for _, frames := range pending {
		m, err := decode(frames, k.sign)
		if err != nil {
			k.log.Warn("kernel: ignoring a message", "socket", "shell", "reason", err.Error(), "frames", len(frames))
			continue
		}
		if m.header.MsgType != "execute_request" {
			k.dispatchShell(ctx, m, nil)
			continue
		}
		_ = k.publish(m.rawHeader, "status", statusContent{"busy"})
		count := k.count
		k.reply(k.shell, m, "execute_reply", errorReply{
			Status: "error", ExecutionCount: &count, EName: "Aborted",
			EValue:    "not run because an earlier cell failed",
			Traceback: []string{},
		})
		_ = k.publish(m.rawHeader, "status", statusContent{"idle"})
	}
}

// handleControl decodes and answers one control message.
func (k *Kernel) handleControl(frames [][]byte) {
	m, err := decode(frames, k.sign)
	if err != nil {
		k.log.Warn("kernel: ignoring a message", "socket", "control", "reason", err.Error(), "frames", len(frames))
		return
	}
	_ = k.publish(m.rawHeader, "status", statusContent{"busy"})
	defer func() { _ = k.publish(m.rawHeader, "status", statusContent{"idle"}) }()

	switch t := m.header.MsgType; t {
	case "interrupt_request":
		k.Interrupt()
		k.reply(k.control, m, "interrupt_reply", struct {
			Status string `json:"status"`
		}{"ok"})
	case "shutdown_request":
		k.shutdown(k.control, m)
	case "kernel_info_request":
		k.reply(k.control, m, "kernel_info_reply", k.kernelInfo())
	case "execute_request", "complete_request", "inspect_request", "is_complete_request":
		v := t + " is served on the shell channel only"
		k.replyError(k.control, m, replyType(t), &CellError{Name: "WrongChannel", Value: v, Traceback: []string{"WrongChannel: " + v}})
	default:
		k.log.Warn("kernel: ignoring an unknown message type", "socket", "control", "msg_type", t)
	}
}

func (k *Kernel) kernelInfo() kernelInfoContent {
	li := k.info
	name := li.Name
	if name == "" {
		name = "massline"
	}
	impl := li.ImplVersion
	if impl == "" {
		impl = "0"
	}
	links := make([]helpLinkJSON, 0, len(li.HelpLinks))
	for _, l := range li.HelpLinks {
		links = append(links, helpLinkJSON{Text: l.Text, URL: l.URL})
	}
	return kernelInfoContent{
		Status:                "ok",
		ProtocolVersion:       ProtocolVersion,
		Implementation:        Implementation,
		ImplementationVersion: impl,
		LanguageInfo: languageJSON{
			Name:          name,
			Version:       li.Version,
			MIMEType:      li.MIMEType,
			FileExtension: li.FileExtension,
			PygmentsLexer: li.PygmentsLexer,
		},
		Banner:    li.Banner,
		HelpLinks: links,
	}
}

func (k *Kernel) shutdown(sock zmq4.Socket, m *message) {
	var req struct {
		Restart bool `json:"restart"`
	}
	if err := json.Unmarshal(m.content, &req); err != nil {
		k.log.Warn("kernel: shutdown_request content unreadable; shutting down without restart", "err", err)
	}
	k.log.Info("kernel: shutdown requested", "restart", req.Restart)
	k.Interrupt()
	k.reply(sock, m, "shutdown_reply", shutdownContent{Status: "ok", Restart: req.Restart})
	k.requestShutdown(req.Restart)
}

// execute runs one execute_request. If the cell fails and stop_on_error
// holds, the requests already queued are taken before the reply goes out
// (so none sent after the client saw the reply is caught) and returned.
func (k *Kernel) execute(ctx context.Context, m *message, queue <-chan [][]byte) (aborted [][][]byte) {
	var req struct {
		Code         string `json:"code"`
		Silent       bool   `json:"silent"`
		StoreHistory *bool  `json:"store_history"`
		StopOnError  *bool  `json:"stop_on_error"`
	}
	if err := json.Unmarshal(m.content, &req); err != nil {
		ce := badRequest(m, err)
		count := k.count
		k.reply(k.shell, m, "execute_reply", errorReply{Status: "error", ExecutionCount: &count,
			EName: ce.Name, EValue: ce.Value, Traceback: ce.Traceback})
		return nil
	}
	if !req.Silent && (req.StoreHistory == nil || *req.StoreHistory) {
		k.count++
	}
	count := k.count
	if !req.Silent {
		_ = k.publish(m.rawHeader, "execute_input", inputContent{Code: req.Code, ExecutionCount: count})
	}

	cctx, cancel := context.WithCancel(ctx)
	defer cancel()
	k.runMu.Lock()
	k.runCancel, k.interrupted = cancel, false
	k.runMu.Unlock()

	sink := &cellSink{k: k, parent: m.rawHeader, silent: req.Silent}
	var res Bundle
	var err error
	if perr := k.guard(func() { res, err = k.eng.Execute(cctx, req.Code, sink) }); perr != nil {
		err = perr
	}
	sink.close()
	k.runMu.Lock()
	interrupted := k.interrupted
	k.runCancel, k.interrupted = nil, false
	k.runMu.Unlock()

	if err == nil {
		if len(res) > 0 && !req.Silent {
			k.publishBundle(m.rawHeader, "execute_result", res, func(b Bundle) any {
				return resultContent{ExecutionCount: count, Data: b}
			})
		}
		k.reply(k.shell, m, "execute_reply", executeOK{Status: "ok", ExecutionCount: count, Payload: []any{}})
		return nil
	}
	ce := asCellError(err, interrupted)
	if !req.Silent {
		_ = k.publish(m.rawHeader, "error", errorContent{EName: ce.Name, EValue: ce.Value, Traceback: ce.Traceback})
	}
	if (req.StopOnError == nil || *req.StopOnError) && queue != nil {
		aborted = takeQueued(queue)
	}
	k.reply(k.shell, m, "execute_reply", errorReply{Status: "error", ExecutionCount: &count,
		EName: ce.Name, EValue: ce.Value, Traceback: ce.Traceback})
	return aborted
}

// asCellError turns any error from Execute into a complete *CellError.
func asCellError(err error, interrupted bool) *CellError {
	var ce CellError
	var p *CellError
	switch {
	case errors.As(err, &p) && p != nil:
		ce = *p
	case interrupted || errors.Is(err, context.Canceled):
		ce = CellError{Name: "Interrupted", Value: "interrupted",
			Traceback: []string{"Interrupted: the cell was stopped before it finished"}}
	default:
		ce = CellError{Name: "Error", Value: err.Error()}
	}
	if ce.Name == "" {
		ce.Name = "Error"
	}
	if len(ce.Traceback) == 0 {
		ce.Traceback = []string{ce.Name + ": " + ce.Value}
	}
	return &ce
}

// cursorArg reads cursor_pos, defaulting to the end of the code and
// clamping to its length in code points.
func cursorArg(code string, pos *int) int {
	n := utf8.RuneCountInString(code)
	if pos == nil || *pos > n {
		return n
	}
	return max(*pos, 0)
}

func (k *Kernel) complete(m *message) {
	var req struct {
		Code      string `json:"code"`
		CursorPos *int   `json:"cursor_pos"`
	}
	if err := json.Unmarshal(m.content, &req); err != nil {
		k.replyError(k.shell, m, "complete_reply", badRequest(m, err))
		return
	}
	cur := cursorArg(req.Code, req.CursorPos)
	var c Completion
	if err := k.guard(func() { c = k.eng.Complete(req.Code, cur) }); err != nil {
		k.replyError(k.shell, m, "complete_reply", asCellError(err, false))
		return
	}
	n := utf8.RuneCountInString(req.Code)
	start := min(max(c.CursorStart, 0), n)
	end := min(max(c.CursorEnd, start), n)
	k.reply(k.shell, m, "complete_reply", completeContent{Status: "ok", Matches: nonNil(c.Matches), CursorStart: start, CursorEnd: end})
}

func (k *Kernel) inspect(m *message) {
	var req struct {
		Code        string `json:"code"`
		CursorPos   *int   `json:"cursor_pos"`
		DetailLevel int    `json:"detail_level"`
	}
	if err := json.Unmarshal(m.content, &req); err != nil {
		k.replyError(k.shell, m, "inspect_reply", badRequest(m, err))
		return
	}
	cur := cursorArg(req.Code, req.CursorPos)
	var b Bundle
	var found bool
	if err := k.guard(func() { b, found = k.eng.Inspect(req.Code, cur, req.DetailLevel) }); err != nil {
		k.replyError(k.shell, m, "inspect_reply", asCellError(err, false))
		return
	}
	if !found || b == nil {
		b = Bundle{}
	}
	if _, err := marshal(b); err != nil {
		k.log.Error("kernel: inspect bundle is not JSON-encodable", "err", err)
		b = Bundle{"text/plain": fmt.Sprintf("(help could not be encoded as JSON: %v)", err)}
	}
	k.reply(k.shell, m, "inspect_reply", inspectContent{Status: "ok", Found: found, Data: b})
}

func (k *Kernel) isComplete(m *message) {
	var req struct {
		Code string `json:"code"`
	}
	if err := json.Unmarshal(m.content, &req); err != nil {
		k.replyError(k.shell, m, "is_complete_reply", badRequest(m, err))
		return
	}
	var status, indent string
	if err := k.guard(func() { status, indent = k.eng.IsComplete(req.Code) }); err != nil {
		k.replyError(k.shell, m, "is_complete_reply", asCellError(err, false))
		return
	}
	out := isCompleteContent{Status: status}
	switch status {
	case "complete", "invalid":
	case "incomplete":
		out.Indent = &indent
	default:
		out.Status = "unknown"
	}
	k.reply(k.shell, m, "is_complete_reply", out)
}

// cellSink forwards what a running cell emits to iopub. Calls after the
// cell has finished are dropped with a log line.
type cellSink struct {
	k      *Kernel
	parent []byte
	silent bool
	mu     sync.Mutex
	done   bool
}

func (s *cellSink) close() {
	s.mu.Lock()
	s.done = true
	s.mu.Unlock()
}

// Stream implements Sink.
func (s *cellSink) Stream(name, text string) {
	if text == "" {
		return
	}
	if name != "stderr" {
		name = "stdout"
	}
	s.mu.Lock()
	defer s.mu.Unlock()
	if s.done {
		s.k.log.Warn("kernel: output after the cell finished was dropped", "stream", name)
		return
	}
	if s.silent {
		return
	}
	_ = s.k.publish(s.parent, "stream", streamContent{Name: name, Text: text})
}

// Display implements Sink.
func (s *cellSink) Display(b Bundle) {
	if len(b) == 0 {
		return
	}
	s.mu.Lock()
	defer s.mu.Unlock()
	if s.done {
		s.k.log.Warn("kernel: display after the cell finished was dropped")
		return
	}
	if s.silent {
		return
	}
	s.k.publishBundle(s.parent, "display_data", b, func(b Bundle) any { return displayContent{Data: b} })
}
