package kernel

import (
	"encoding/binary"
	"net"
	"os"
	"path/filepath"
	"regexp"
	"runtime"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/go-zeromq/zmq4"
)

const wait = 5 * time.Second

var uuidRE = regexp.MustCompile(`^[0-9a-f]{8}-[0-9a-f]{4}-4[0-9a-f]{3}-[89ab][0-9a-f]{3}-[0-9a-f]{12}$`)

func checkHeader(t *testing.T, k *Kernel, m *wmsg, msgType string) {
	t.Helper()
	h := m.Header
	if h["msg_type"] != msgType {
		t.Errorf("msg_type = %v, want %s", h["msg_type"], msgType)
	}
	if h["version"] != "5.3" {
		t.Errorf("version = %v, want 5.3", h["version"])
	}
	if h["session"] != k.Session() {
		t.Errorf("session = %v, want %s", h["session"], k.Session())
	}
	if id, _ := h["msg_id"].(string); !uuidRE.MatchString(id) {
		t.Errorf("msg_id %q is not a v4 UUID", id)
	}
	if u, _ := h["username"].(string); u == "" {
		t.Error("empty username")
	}
	d, _ := h["date"].(string)
	if _, err := time.Parse(time.RFC3339Nano, d); err != nil || !(strings.HasSuffix(d, "Z") || strings.ContainsAny(d[len(d)-6:], "+-")) {
		t.Errorf("date %q is not ISO 8601 with a time zone (%v)", d, err)
	}
}

func TestKernelInfoRoundTrip(t *testing.T) {
	h := startKernel(t, nil)
	for _, ch := range []struct {
		name string
		sock zmq4.Socket
		in   chan *wmsg
	}{{"shell", h.c.shell, h.c.shellIn}, {"control", h.c.control, h.c.controlIn}} {
		t.Run(ch.name, func(t *testing.T) {
			id := h.c.send(ch.sock, "kernel_info_request", nil)
			r := h.c.reply(ch.in, id, wait)
			checkHeader(t, h.k, r, "kernel_info_reply")
			if r.Parent["msg_type"] != "kernel_info_request" || r.Parent["session"] != h.c.session {
				t.Errorf("parent header not echoed: %v", r.Parent)
			}
			c := r.Content
			for key, want := range map[string]any{
				"status": "ok", "protocol_version": "5.3", "implementation": "massline",
				"implementation_version": "0.1.0-test", "banner": "massline test engine",
			} {
				if c[key] != want {
					t.Errorf("%s = %v, want %v", key, c[key], want)
				}
			}
			li, _ := c["language_info"].(map[string]any)
			for key, want := range map[string]any{"name": "massline", "version": "0.1.0", "mimetype": "text/x-massline", "file_extension": ".mass"} {
				if li[key] != want {
					t.Errorf("language_info.%s = %v, want %v", key, li[key], want)
				}
			}
			if _, ok := li["pygments_lexer"]; ok {
				t.Error("pygments_lexer present although the engine gave none")
			}
			links, _ := c["help_links"].([]any)
			if len(links) != 1 || links[0].(map[string]any)["url"] != "https://example.org/massline" {
				t.Errorf("help_links = %v", c["help_links"])
			}
			io := h.c.collect(id, wait)
			if got := types(io); len(got) != 2 || got[0] != "status:busy" || got[1] != "status:idle" {
				t.Errorf("iopub = %v, want busy, idle", got)
			}
			for _, m := range io {
				checkHeader(t, h.k, m, "status")
			}
		})
	}
}

func TestExecuteOutputs(t *testing.T) {
	h := startKernel(t, nil)
	code := "print hello\nwarn careful\nshow plot\nvalue 42"
	id := h.c.execute(code)
	r := h.c.reply(h.c.shellIn, id, wait)
	checkHeader(t, h.k, r, "execute_reply")
	if r.Content["status"] != "ok" || r.Content["execution_count"] != 1.0 {
		t.Fatalf("execute_reply = %v", r.Content)
	}
	if ue, ok := r.Content["user_expressions"].(map[string]any); !ok || len(ue) != 0 {
		t.Errorf("user_expressions = %v, want {}", r.Content["user_expressions"])
	}
	if p, ok := r.Content["payload"].([]any); !ok || len(p) != 0 {
		t.Errorf("payload = %v, want []", r.Content["payload"])
	}
	io := h.c.collect(id, wait)
	want := []string{"status:busy", "execute_input", "stream", "stream", "display_data", "execute_result", "status:idle"}
	if got := types(io); strings.Join(got, ",") != strings.Join(want, ",") {
		t.Fatalf("iopub = %v, want %v", got, want)
	}
	if c := io[1].Content; c["code"] != code || c["execution_count"] != 1.0 {
		t.Errorf("execute_input = %v", c)
	}
	if c := io[2].Content; c["name"] != "stdout" || c["text"] != "hello\n" {
		t.Errorf("stdout stream = %v", c)
	}
	if c := io[3].Content; c["name"] != "stderr" || c["text"] != "careful\n" {
		t.Errorf("stderr stream = %v", c)
	}
	dd := io[4].Content
	data, _ := dd["data"].(map[string]any)
	if data["text/plain"] != "plot" || data["text/html"] != "<b>plot</b>" {
		t.Errorf("display_data data = %v", dd["data"])
	}
	for _, key := range []string{"metadata", "transient"} {
		if m, ok := dd[key].(map[string]any); !ok || len(m) != 0 {
			t.Errorf("display_data %s = %v, want {}", key, dd[key])
		}
	}
	er := io[5].Content
	if er["execution_count"] != 1.0 || er["data"].(map[string]any)["text/plain"] != "42" {
		t.Errorf("execute_result = %v", er)
	}
	if m, ok := er["metadata"].(map[string]any); !ok || len(m) != 0 {
		t.Errorf("execute_result metadata = %v", er["metadata"])
	}

	// The counter goes up with every stored execution.
	id = h.c.execute("value 7")
	if r := h.c.reply(h.c.shellIn, id, wait); r.Content["execution_count"] != 2.0 {
		t.Errorf("second execution_count = %v, want 2", r.Content["execution_count"])
	}
	// store_history=false: no increment, but execute_input still shown.
	id = h.c.send(h.c.shell, "execute_request", map[string]any{"code": "value 8", "silent": false, "store_history": false})
	if r := h.c.reply(h.c.shellIn, id, wait); r.Content["execution_count"] != 2.0 {
		t.Errorf("store_history=false execution_count = %v, want 2", r.Content["execution_count"])
	}
	if got := types(h.c.collect(id, wait)); strings.Join(got, ",") != "status:busy,execute_input,execute_result,status:idle" {
		t.Errorf("store_history=false iopub = %v", got)
	}
	// silent=true: no increment and nothing on iopub but the status.
	id = h.c.send(h.c.shell, "execute_request", map[string]any{"code": "print x\nvalue 9", "silent": true})
	if r := h.c.reply(h.c.shellIn, id, wait); r.Content["execution_count"] != 2.0 || r.Content["status"] != "ok" {
		t.Errorf("silent reply = %v", r.Content)
	}
	if got := types(h.c.collect(id, wait)); strings.Join(got, ",") != "status:busy,status:idle" {
		t.Errorf("silent iopub = %v", got)
	}
	// A result JSON cannot encode becomes a text/plain explanation.
	id = h.c.execute("nan")
	if r := h.c.reply(h.c.shellIn, id, wait); r.Content["status"] != "ok" {
		t.Errorf("nan reply = %v", r.Content)
	}
	io = h.c.collect(id, wait)
	if io[2].Type() != "execute_result" || !strings.Contains(io[2].Content["data"].(map[string]any)["text/plain"].(string), "could not be encoded") {
		t.Errorf("unencodable result: %v", io[2].Content)
	}
}

func TestWrongSignatureIgnored(t *testing.T) {
	h := startKernel(t, nil)
	for _, sig := range [][]byte{[]byte(strings.Repeat("0", 64)), {}, []byte("not hex at all")} {
		id, f := h.c.frames("kernel_info_request", map[string]any{}, sig)
		h.c.sendRaw(h.c.shell, f...)
		h.c.noReply(h.c.shellIn, id, 300*time.Millisecond)
		if n := len(h.c.iopubFor(id)); n != 0 {
			t.Errorf("iopub carried %d messages for a badly signed request", n)
		}
	}
	if n := h.logs.count("signature does not match"); n != 3 {
		t.Errorf("%d log lines for bad signatures, want 3", n)
	}
	// A replayed (identical, validly signed) message is answered once only.
	id, f := h.c.frames("kernel_info_request", map[string]any{}, nil)
	h.c.sendRaw(h.c.shell, f...)
	h.c.reply(h.c.shellIn, id, wait)
	h.c.sendRaw(h.c.shell, f...)
	h.c.noReply(h.c.shellIn, id, 300*time.Millisecond)
	if h.logs.count("replayed") != 1 {
		t.Error("no log line for the replayed message")
	}
	// And a fresh, correct request works.
	id = h.c.execute("value ok")
	if r := h.c.reply(h.c.shellIn, id, wait); r.Content["status"] != "ok" {
		t.Errorf("reply after bad signatures = %v", r.Content)
	}
}

func TestErrorCell(t *testing.T) {
	h := startKernel(t, nil)
	id := h.c.execute("print before\nfail")
	r := h.c.reply(h.c.shellIn, id, wait)
	c := r.Content
	if c["status"] != "error" || c["ename"] != "CheckError" || c["evalue"] != "bad thing" || c["execution_count"] != 1.0 {
		t.Fatalf("error reply = %v", c)
	}
	if tb, _ := c["traceback"].([]any); len(tb) != 2 || tb[0] != "line 1: fail" {
		t.Errorf("traceback = %v", c["traceback"])
	}
	io := h.c.collect(id, wait)
	if got := types(io); strings.Join(got, ",") != "status:busy,execute_input,stream,error,status:idle" {
		t.Fatalf("iopub = %v", got)
	}
	if e := io[3].Content; e["ename"] != "CheckError" || e["evalue"] != "bad thing" {
		t.Errorf("iopub error = %v", e)
	}

	// A plain Go error is wrapped.
	id = h.c.execute("plainfail")
	c = h.c.reply(h.c.shellIn, id, wait).Content
	if c["status"] != "error" || c["ename"] != "Error" || c["evalue"] != "plain failure" {
		t.Errorf("wrapped error reply = %v", c)
	}
	if tb, _ := c["traceback"].([]any); len(tb) != 1 || tb[0] != "Error: plain failure" {
		t.Errorf("wrapped traceback = %v", c["traceback"])
	}

	// The next cell still works and counts on.
	id = h.c.execute("value fine")
	c = h.c.reply(h.c.shellIn, id, wait).Content
	if c["status"] != "ok" || c["execution_count"] != 3.0 {
		t.Errorf("reply after errors = %v", c)
	}
}

func TestStopOnErrorAbortsQueue(t *testing.T) {
	h := startKernel(t, nil)
	first := h.c.execute("slowfail")
	queued := []string{h.c.execute("value a"), h.c.execute("value b")}
	if c := h.c.reply(h.c.shellIn, first, wait).Content; c["ename"] != "CheckError" {
		t.Fatalf("first reply = %v", c)
	}
	for _, id := range queued {
		c := h.c.reply(h.c.shellIn, id, wait).Content
		if c["status"] != "error" || c["ename"] != "Aborted" {
			t.Errorf("queued reply = %v, want an Aborted error", c)
		}
		if got := types(h.c.collect(id, wait)); strings.Join(got, ",") != "status:busy,status:idle" {
			t.Errorf("aborted cell iopub = %v", got)
		}
	}
	if n := h.eng.executed.Load(); n != 1 {
		t.Errorf("engine ran %d cells, want 1", n)
	}
	// stop_on_error=false lets queued cells run.
	first = h.c.send(h.c.shell, "execute_request", map[string]any{"code": "slowfail", "stop_on_error": false})
	next := h.c.execute("value c")
	h.c.reply(h.c.shellIn, first, wait)
	if c := h.c.reply(h.c.shellIn, next, wait).Content; c["status"] != "ok" {
		t.Errorf("cell after stop_on_error=false failure = %v", c)
	}
}

func TestGarbageDoesNotKillKernel(t *testing.T) {
	h := startKernel(t, &Config{MaxMessageSize: 64 << 10})
	c := h.c
	// signed builds a correctly signed message from raw frames; metadata
	// carries a nonce so that shell and control copies are not replays.
	signed := func(hdr, content string) func(string) [][]byte {
		return func(nonce string) [][]byte {
			md := `{"nonce":"` + nonce + `"}`
			s := c.mac([]byte(hdr), []byte("{}"), []byte(md), []byte(content))
			return [][]byte{[]byte("<IDS|MSG>"), []byte(s), []byte(hdr), []byte("{}"), []byte(md), []byte(content)}
		}
	}
	fixed := func(frames ...string) func(string) [][]byte {
		return func(string) [][]byte {
			var b [][]byte
			for _, f := range frames {
				b = append(b, []byte(f))
			}
			return b
		}
	}
	hdr := `{"msg_id":"x1","session":"s","username":"u","msg_type":"kernel_info_request","version":"5.3","date":"2024-01-01T00:00:00Z"}`
	cases := []struct {
		name   string
		frames func(nonce string) [][]byte
		log    string
	}{
		{"one frame", fixed("hello"), "no <IDS|MSG> delimiter"},
		{"no delimiter", fixed("a", "b", "c", "d", "e", "f"), "no <IDS|MSG> delimiter"},
		{"too few", fixed("<IDS|MSG>", "sig", "{}"), "too few frames"},
		{"invalid json", signed("{not json", "{}"), "header is not a JSON object"},
		{"content array", signed(hdr, "[1]"), "content is not a JSON object"},
		{"no msg_type", signed(`{"msg_id":"y"}`, "{}"), "header has no msg_type"},
		{"header wrong types", signed(`{"msg_type":5}`, "{}"), "header: json"},
	}
	for _, tc := range cases {
		before := h.logs.count(tc.log)
		c.sendRaw(c.shell, tc.frames("shell")...)
		c.sendRaw(c.control, tc.frames("control")...)
		if !waitFor(2*time.Second, func() bool { return h.logs.count(tc.log) >= before+2 }) {
			t.Errorf("%s: no log line %q for shell and control", tc.name, tc.log)
		}
	}

	// Wrong-typed content of a known request: an error reply.
	id := c.send(c.shell, "execute_request", map[string]any{"code": 12})
	if r := c.reply(c.shellIn, id, wait).Content; r["status"] != "error" || r["ename"] != "BadRequest" {
		t.Errorf("bad execute content reply = %v", r)
	}
	// Unknown message types: busy/idle, a log line, no reply.
	id = c.send(c.shell, "frobnicate_request", nil)
	c.noReply(c.shellIn, id, 200*time.Millisecond)
	if got := types(c.collect(id, wait)); strings.Join(got, ",") != "status:busy,status:idle" {
		t.Errorf("unknown type iopub = %v", got)
	}
	if h.logs.count("frobnicate_request") == 0 {
		t.Error("no log line for the unknown message type")
	}

	// An oversized message is discarded with a log line; one under the cap works.
	big := strings.Repeat("x", 200<<10)
	id = c.send(c.shell, "execute_request", map[string]any{"code": "value " + big})
	c.noReply(c.shellIn, id, 300*time.Millisecond)
	if h.logs.count("over the size cap") == 0 {
		t.Error("no log line for the oversized message")
	}
	id = c.execute("value " + strings.Repeat("y", 30<<10))
	if r := c.reply(c.shellIn, id, wait).Content; r["status"] != "ok" {
		t.Errorf("reply under the cap = %v", r)
	}

	// Raw TCP abuse: junk instead of a greeting; a greeting then a frame
	// declaring 2^62 bytes; a huge command during the handshake.
	addr := net.JoinHostPort("127.0.0.1", strconv.Itoa(h.k.Connection().ShellPort))
	raw := func(payload []byte) {
		conn, err := net.Dial("tcp", addr)
		if err != nil {
			t.Fatal(err)
		}
		defer conn.Close()
		_, _ = conn.Write(payload)
		time.Sleep(50 * time.Millisecond)
	}
	raw([]byte("GET / HTTP/1.0\r\n\r\n" + strings.Repeat("\xff", 100)))
	hugeData := append(greeting(), readyCommand("DEALER")...)
	hugeData = append(hugeData, longHeader(0x02, 1<<62)...)
	raw(hugeData)
	raw(append(greeting(), longHeader(0x06, 1<<62)...))
	if h.logs.count("oversized ZMTP command") == 0 {
		t.Error("no log line for the huge command")
	}

	// The kernel still answers.
	id = c.execute("value alive")
	if r := c.reply(c.shellIn, id, wait).Content; r["status"] != "ok" {
		t.Errorf("reply after garbage = %v", r)
	}
	id = c.send(c.control, "kernel_info_request", nil)
	c.reply(c.controlIn, id, wait)
}

// greeting is a ZMTP 3.0 NULL-mechanism client greeting.
func greeting() []byte {
	g := make([]byte, 64)
	g[0], g[9], g[10], g[11] = 0xff, 0x7f, 3, 0
	copy(g[12:], "NULL")
	return g
}

// readyCommand is a ZMTP READY command announcing socket type st.
func readyCommand(st string) []byte {
	body := []byte{5}
	body = append(body, "READY"...)
	prop := func(name, value string) {
		body = append(body, byte(len(name)))
		body = append(body, name...)
		var n [4]byte
		binary.BigEndian.PutUint32(n[:], uint32(len(value)))
		body = append(body, n[:]...)
		body = append(body, value...)
	}
	prop("Socket-Type", st)
	prop("Identity", "")
	return append([]byte{0x04, byte(len(body))}, body...)
}

func longHeader(flag byte, size uint64) []byte {
	b := make([]byte, 9)
	b[0] = flag
	binary.BigEndian.PutUint64(b[1:], size)
	return b
}

func TestHeartbeatEcho(t *testing.T) {
	h := startKernel(t, nil)
	for _, payload := range []string{"ping", "beat-" + randHex(4)} {
		if err := h.c.hb.Send(zmq4.NewMsgString(payload)); err != nil {
			t.Fatal(err)
		}
		m, err := h.c.hb.Recv()
		if err != nil {
			t.Fatal(err)
		}
		if len(m.Frames) != 1 || string(m.Frames[0]) != payload {
			t.Errorf("heartbeat echoed %q, want %q", m.Frames, payload)
		}
	}
}

func TestInterruptRequest(t *testing.T) {
	h := startKernel(t, nil)
	id := h.c.execute("print started\nblock")
	select {
	case <-h.eng.started:
	case <-time.After(wait):
		t.Fatal("cell did not start")
	}
	t0 := time.Now()
	iid := h.c.send(h.c.control, "interrupt_request", nil)
	ir := h.c.reply(h.c.controlIn, iid, wait)
	if ir.Type() != "interrupt_reply" || ir.Content["status"] != "ok" || len(ir.Content) != 1 {
		t.Errorf("interrupt reply %s %v, want {\"status\":\"ok\"}", ir.Type(), ir.Content)
	}
	r := h.c.reply(h.c.shellIn, id, wait)
	elapsed := time.Since(t0)
	t.Logf("interrupt to execute_reply: %v", elapsed)
	if elapsed > time.Second {
		t.Errorf("execute_reply came %v after the interrupt, want < 1 s", elapsed)
	}
	if c := r.Content; c["status"] != "error" || c["ename"] != "Interrupted" || c["evalue"] != "interrupted" {
		t.Errorf("interrupted reply = %v", c)
	}
	if got := types(h.c.collect(iid, wait)); strings.Join(got, ",") != "status:busy,status:idle" {
		t.Errorf("control iopub = %v", got)
	}
	// Kernel.Interrupt (the SIGINT path) does the same.
	id = h.c.execute("block")
	<-h.eng.started
	h.k.Interrupt()
	if c := h.c.reply(h.c.shellIn, id, wait).Content; c["ename"] != "Interrupted" {
		t.Errorf("Interrupt() reply = %v", c)
	}
	// Interrupting an idle kernel is harmless, and the next cell runs.
	h.k.Interrupt()
	id = h.c.execute("value after")
	if c := h.c.reply(h.c.shellIn, id, wait).Content; c["status"] != "ok" {
		t.Errorf("reply after interrupts = %v", c)
	}
}

func TestShutdown(t *testing.T) {
	t.Run("control", func(t *testing.T) {
		h := startKernel(t, nil)
		id := h.c.send(h.c.control, "shutdown_request", map[string]any{"restart": false})
		r := h.c.reply(h.c.controlIn, id, wait)
		if r.Type() != "shutdown_reply" || r.Content["status"] != "ok" || r.Content["restart"] != false {
			t.Errorf("shutdown reply %s %v", r.Type(), r.Content)
		}
		if err := h.waitRun(t, 3*time.Second); err != nil {
			t.Errorf("Run returned %v, want nil", err)
		}
		if h.k.RestartRequested() || h.eng.resets.Load() != 0 {
			t.Error("restart reported without being asked")
		}
	})
	t.Run("shell restart while a cell runs", func(t *testing.T) {
		h := startKernel(t, nil)
		xid := h.c.execute("block")
		<-h.eng.started
		id := h.c.send(h.c.control, "shutdown_request", map[string]any{"restart": true})
		if r := h.c.reply(h.c.controlIn, id, wait); r.Content["restart"] != true {
			t.Errorf("shutdown reply %v", r.Content)
		}
		if c := h.c.reply(h.c.shellIn, xid, wait).Content; c["ename"] != "Interrupted" {
			t.Errorf("running cell's reply = %v", c)
		}
		if err := h.waitRun(t, 3*time.Second); err != nil {
			t.Errorf("Run returned %v", err)
		}
		if !h.k.RestartRequested() || h.eng.resets.Load() != 1 {
			t.Errorf("restart=%v resets=%d, want true, 1", h.k.RestartRequested(), h.eng.resets.Load())
		}
	})
	t.Run("engine ignores the interrupt", func(t *testing.T) {
		h := startKernel(t, &Config{ShutdownGrace: 300 * time.Millisecond})
		defer close(h.eng.release)
		h.c.execute("hang")
		<-h.eng.started
		id := h.c.send(h.c.control, "shutdown_request", map[string]any{"restart": true})
		h.c.reply(h.c.controlIn, id, wait)
		if err := h.waitRun(t, 2*time.Second); err != nil {
			t.Errorf("Run returned %v", err)
		}
		if h.eng.resets.Load() != 0 {
			t.Error("Reset called while Execute was still running")
		}
		if h.logs.count("did not stop within the shutdown grace period") != 1 {
			t.Error("no log line for the stuck cell")
		}
	})
	t.Run("shell", func(t *testing.T) {
		h := startKernel(t, nil)
		id := h.c.send(h.c.shell, "shutdown_request", map[string]any{"restart": false})
		if r := h.c.reply(h.c.shellIn, id, wait); r.Type() != "shutdown_reply" {
			t.Errorf("reply type %s", r.Type())
		}
		if err := h.waitRun(t, 3*time.Second); err != nil {
			t.Errorf("Run returned %v", err)
		}
	})
}

func TestSmallRequests(t *testing.T) {
	h := startKernel(t, nil)
	c := h.c
	ask := func(msgType string, content map[string]any) map[string]any {
		t.Helper()
		id := c.send(c.shell, msgType, content)
		r := c.reply(c.shellIn, id, wait)
		if want := strings.TrimSuffix(msgType, "_request") + "_reply"; r.Type() != want {
			t.Errorf("reply type %s, want %s", r.Type(), want)
		}
		if got := types(c.collect(id, wait)); len(got) < 2 || got[0] != "status:busy" || got[len(got)-1] != "status:idle" {
			t.Errorf("%s iopub = %v", msgType, got)
		}
		return r.Content
	}

	r := ask("complete_request", map[string]any{"code": "body b: sp", "cursor_pos": 10})
	m, _ := r["matches"].([]any)
	if r["status"] != "ok" || len(m) != 2 || m[0] != "species" || m[1] != "sphere" || r["cursor_start"] != 8.0 || r["cursor_end"] != 10.0 {
		t.Errorf("complete_reply = %v", r)
	}
	if md, ok := r["metadata"].(map[string]any); !ok || len(md) != 0 {
		t.Errorf("complete metadata = %v", r["metadata"])
	}
	// Cursor counted in code points; a cursor past the end is clamped.
	r = ask("complete_request", map[string]any{"code": "µ sh", "cursor_pos": 99})
	if r["cursor_start"] != 2.0 || r["cursor_end"] != 4.0 {
		t.Errorf("complete with clamped cursor = %v", r)
	}
	r = ask("complete_request", map[string]any{"code": "zz", "cursor_pos": 2})
	if m, ok := r["matches"].([]any); !ok || len(m) != 0 {
		t.Errorf("no-match completion = %v, want matches []", r["matches"])
	}

	r = ask("inspect_request", map[string]any{"code": "body b: sphere", "cursor_pos": 10, "detail_level": 1})
	if r["status"] != "ok" || r["found"] != true || r["data"].(map[string]any)["text/plain"] != "sphere: a spherical body (detail 1)" {
		t.Errorf("inspect_reply = %v", r)
	}
	r = ask("inspect_request", map[string]any{"code": "nothing", "cursor_pos": 3})
	if d, ok := r["data"].(map[string]any); r["found"] != false || !ok || len(d) != 0 {
		t.Errorf("inspect_reply not found = %v", r)
	}
	if md, ok := r["metadata"].(map[string]any); !ok || len(md) != 0 {
		t.Errorf("inspect metadata = %v", r["metadata"])
	}

	for _, tc := range []struct {
		code, status string
		indent       any
	}{{"stage soak:", "incomplete", "    "}, {"value 1", "complete", nil}, {"f())", "invalid", nil}, {"weird", "unknown", nil}} {
		r = ask("is_complete_request", map[string]any{"code": tc.code})
		indent, has := r["indent"]
		if r["status"] != tc.status || (tc.indent == nil) == has || (has && indent != tc.indent) {
			t.Errorf("is_complete(%q) = %v", tc.code, r)
		}
	}

	r = ask("comm_info_request", map[string]any{})
	if cm, ok := r["comms"].(map[string]any); r["status"] != "ok" || !ok || len(cm) != 0 {
		t.Errorf("comm_info_reply = %v", r)
	}
	r = ask("history_request", map[string]any{"output": false, "raw": true, "hist_access_type": "tail", "n": 10})
	if hs, ok := r["history"].([]any); r["status"] != "ok" || !ok || len(hs) != 0 {
		t.Errorf("history_reply = %v", r)
	}

	// comm_open to a target that does not exist is closed at once.
	id := c.send(c.shell, "comm_open", map[string]any{"comm_id": "c-1", "target_name": "nobody", "data": map[string]any{}})
	io := c.collect(id, wait)
	if got := types(io); strings.Join(got, ",") != "status:busy,comm_close,status:idle" || io[1].Content["comm_id"] != "c-1" {
		t.Errorf("comm_open iopub = %v", got)
	}

	// Engine work requested on control is refused with an error reply.
	id = c.send(c.control, "complete_request", map[string]any{"code": "s", "cursor_pos": 1})
	if r := c.reply(c.controlIn, id, wait); r.Type() != "complete_reply" || r.Content["status"] != "error" {
		t.Errorf("complete on control = %s %v", r.Type(), r.Content)
	}
}

func TestEnginePanicBecomesError(t *testing.T) {
	h := startKernel(t, nil)
	id := h.c.execute("print partial\npanic")
	c := h.c.reply(h.c.shellIn, id, wait).Content
	if c["status"] != "error" || c["ename"] != "InternalError" || !strings.Contains(c["evalue"].(string), "boom in the engine") {
		t.Errorf("panic reply = %v", c)
	}
	if got := types(h.c.collect(id, wait)); strings.Join(got, ",") != "status:busy,execute_input,stream,error,status:idle" {
		t.Errorf("panic iopub = %v", got)
	}
	if h.logs.count("recovered from a panic") == 0 {
		t.Error("panic not logged")
	}
	id = h.c.send(h.c.shell, "complete_request", map[string]any{"code": "panic", "cursor_pos": 5})
	if c := h.c.reply(h.c.shellIn, id, wait).Content; c["status"] != "error" || c["ename"] != "InternalError" {
		t.Errorf("complete panic reply = %v", c)
	}
	id = h.c.execute("value alive")
	if c := h.c.reply(h.c.shellIn, id, wait).Content; c["status"] != "ok" {
		t.Errorf("reply after panic = %v", c)
	}
}

func TestNoGoroutineLeak(t *testing.T) {
	if testing.Short() {
		t.Skip("1,000 executions")
	}
	settle := func(limit int) int {
		var n int
		waitFor(3*time.Second, func() bool { runtime.GC(); n = runtime.NumGoroutine(); return n <= limit })
		return n
	}
	base := runtime.NumGoroutine()
	h := startKernel(t, nil)
	run := func(n int) {
		for i := 0; i < n; i++ {
			id := h.c.execute("value 1")
			if c := h.c.reply(h.c.shellIn, id, wait).Content; c["status"] != "ok" {
				t.Fatalf("execution %d: %v", i, c)
			}
		}
		h.c.collect(h.c.execute(""), wait)
		h.c.clearIOPub()
	}
	run(20)
	mid := runtime.NumGoroutine()
	t0 := time.Now()
	run(1000)
	t.Logf("1,000 executions in %v", time.Since(t0))
	if n := settle(mid + 3); n > mid+3 {
		t.Errorf("goroutines grew from %d to %d over 1,000 executions", mid, n)
	}

	// After shutdown, only the PUB socket's known leftover goroutine may remain.
	id := h.c.send(h.c.control, "shutdown_request", map[string]any{"restart": false})
	h.c.reply(h.c.controlIn, id, wait)
	if err := h.waitRun(t, 3*time.Second); err != nil {
		t.Fatal(err)
	}
	h.c.close()
	// The kernel's PUB socket leaves one goroutine (a known zmq4 flaw).
	if n := settle(base + 1); n > base+1 {
		buf := make([]byte, 1<<16)
		t.Errorf("goroutines: %d before, %d after shutdown\n%s", base, n, buf[:runtime.Stack(buf, true)])
	}
}

func TestStalledSubscriberIsDropped(t *testing.T) {
	h := startKernel(t, &Config{SendTimeout: 300 * time.Millisecond})
	// A raw subscriber that completes the handshake, subscribes to
	// everything and then never reads.
	conn, err := net.Dial("tcp", net.JoinHostPort("127.0.0.1", strconv.Itoa(h.k.Connection().IOPubPort)))
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close()
	if tc, ok := conn.(*net.TCPConn); ok {
		_ = tc.SetReadBuffer(4096)
	}
	msg := append(greeting(), readyCommand("SUB")...)
	msg = append(msg, 0x00, 1, 1) // subscribe to ""
	if _, err := conn.Write(msg); err != nil {
		t.Fatal(err)
	}
	time.Sleep(100 * time.Millisecond)
	t0 := time.Now()
	id := h.c.execute("flood 40")
	if r := h.c.reply(h.c.shellIn, id, 20*time.Second); r.Content["status"] != "ok" {
		t.Fatalf("flood reply = %v", r.Content)
	}
	io := h.c.collect(id, 20*time.Second)
	elapsed := time.Since(t0)
	t.Logf("40 MiB published in %v", elapsed)
	if elapsed > 8*time.Second {
		t.Errorf("publishing took %v: the stalled peer held up every message", elapsed)
	}
	if n := len(io); n != 43 {
		t.Errorf("good subscriber got %d iopub messages, want 43", n)
	}
	if !waitFor(2*time.Second, func() bool { return h.logs.count("stopped reading") > 0 }) {
		t.Error("stalled subscriber not dropped")
	}
}

func TestIPCTransportAndNoKey(t *testing.T) {
	prefix := filepath.Join(t.TempDir(), "kernel")
	h := startKernelOn(t, &ConnectionInfo{Transport: "ipc", IP: prefix}, nil)
	conn := h.k.Connection()
	ports := map[int]bool{}
	for _, p := range []int{conn.ShellPort, conn.ControlPort, conn.IOPubPort, conn.StdinPort, conn.HBPort} {
		if p <= 0 || ports[p] {
			t.Fatalf("ipc ports not distinct and positive: %+v", conn)
		}
		ports[p] = true
		if _, err := os.Stat(prefix + "-" + strconv.Itoa(p)); err != nil {
			t.Errorf("ipc socket file: %v", err)
		}
	}
	// Without a key, messages go unsigned (empty signature) and are accepted.
	id := h.c.execute("value unsigned")
	r := h.c.reply(h.c.shellIn, id, wait)
	if r.Content["status"] != "ok" {
		t.Errorf("reply = %v", r.Content)
	}
}
