package kernel

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// The expected digest was computed with Python's hmac module:
// hmac.new(b"secret", header+parent+metadata+content, hashlib.sha256).hexdigest()
const knownDigest = "47e480b6e7f22570a5edbc2a8d4a5ca2fe7d77d8d797b780f14557b2c146931e"

func knownParts() [][]byte {
	return [][]byte{[]byte(`{"msg_type":"x"}`), []byte("{}"), []byte("{}"), []byte(`{"b":2}`)}
}

func TestSignKnownVector(t *testing.T) {
	s := newSigner("secret")
	if got := string(s.sign(knownParts()...)); got != knownDigest {
		t.Errorf("sign = %s, want %s", got, knownDigest)
	}
	if err := s.verify([]byte(strings.ToUpper(knownDigest)), knownParts()...); err != nil {
		t.Errorf("upper-case hex refused: %v", err)
	}
	if err := s.verify([]byte(knownDigest), knownParts()...); !errors.Is(err, errReplay) {
		t.Errorf("second use of a signature: %v, want errReplay", err)
	}
	bad := []byte(knownDigest)
	bad[10] ^= 1
	if err := newSigner("secret").verify(bad, knownParts()...); !errors.Is(err, errBadSig) {
		t.Errorf("altered signature: %v, want errBadSig", err)
	}
	if err := newSigner("other").verify([]byte(knownDigest), knownParts()...); !errors.Is(err, errBadSig) {
		t.Errorf("wrong key: %v, want errBadSig", err)
	}
	// Without a key nothing is signed and anything is accepted.
	open := newSigner("")
	if got := open.sign(knownParts()...); len(got) != 0 {
		t.Errorf("unsigned signature = %q, want empty", got)
	}
	if err := open.verify([]byte("whatever"), knownParts()...); err != nil {
		t.Errorf("keyless verify: %v", err)
	}
}

func TestReplayMemoryIsBounded(t *testing.T) {
	s := newSigner("k")
	first := s.sign([]byte("{}"), []byte("{}"), []byte("{}"), []byte(`{"n":0}`))
	if err := s.verify(first, []byte("{}"), []byte("{}"), []byte("{}"), []byte(`{"n":0}`)); err != nil {
		t.Fatal(err)
	}
	for i := 1; i <= replayMemory; i++ {
		c := []byte(fmt.Sprintf(`{"i":%d}`, i))
		if err := s.verify(s.sign([]byte("{}"), []byte("{}"), []byte("{}"), c), []byte("{}"), []byte("{}"), []byte("{}"), c); err != nil {
			t.Fatalf("message %d: %v", i, err)
		}
	}
	if len(s.seen) != replayMemory {
		t.Errorf("remembered %d signatures, want %d", len(s.seen), replayMemory)
	}
	// The oldest was forgotten, so it is accepted again.
	if err := s.verify(first, []byte("{}"), []byte("{}"), []byte("{}"), []byte(`{"n":0}`)); err != nil {
		t.Errorf("oldest signature still remembered: %v", err)
	}
}

func TestEncodeDecodeRoundTrip(t *testing.T) {
	s := newSigner("key")
	h := header{MsgID: newID(), Session: "sess", Username: "u", Date: isoNow(), MsgType: "stream", Version: ProtocolVersion}
	parent := []byte(`{"msg_id":"p"}`)
	frames, err := encode([][]byte{[]byte("id1"), []byte("id2")}, s, h, parent, streamContent{"stdout", "<a & b>"})
	if err != nil {
		t.Fatal(err)
	}
	if len(frames) != 8 || string(frames[2]) != "<IDS|MSG>" {
		t.Fatalf("frames = %q", frames)
	}
	if !bytes.Contains(frames[7], []byte("<a & b>")) {
		t.Errorf("content HTML-escaped: %s", frames[7])
	}
	m, err := decode(frames, newSigner("key"))
	if err != nil {
		t.Fatal(err)
	}
	if len(m.ids) != 2 || string(m.ids[1]) != "id2" || m.header != h || string(m.parent) != string(parent) {
		t.Errorf("decoded %+v", m)
	}
	var c streamContent
	if err := json.Unmarshal(m.content, &c); err != nil || c.Text != "<a & b>" {
		t.Errorf("content %s: %v", m.content, err)
	}
	frames = append(frames, []byte("buffer"))
	if m, err := decode(frames, newSigner("key")); err != nil || len(m.buffers) != 1 {
		t.Errorf("buffers: %v %v", m, err)
	}
}

func TestDecodeRejects(t *testing.T) {
	s := newSigner("")
	ok := func(h string) [][]byte {
		return [][]byte{[]byte("<IDS|MSG>"), {}, []byte(h), []byte("{}"), []byte("{}"), []byte("{}")}
	}
	for name, frames := range map[string][][]byte{
		"empty":        nil,
		"no delimiter": {[]byte("a"), []byte("{}")},
		"too few":      {[]byte("<IDS|MSG>"), {}, []byte("{}")},
		"header array": ok("[]"),
		"header null":  ok("null"),
		"header junk":  ok(`{"msg_type":"x"} trailing`),
		"no msg_type":  ok(`{"msg_id":"a"}`),
		"msg_type num": ok(`{"msg_type":1}`),
	} {
		if _, err := decode(frames, s); err == nil {
			t.Errorf("%s: accepted", name)
		}
	}
	if _, err := decode(ok(` {"msg_type":"x"}`), s); err != nil {
		t.Errorf("leading space refused: %v", err)
	}
}

func TestNewIDIsUUID4(t *testing.T) {
	seen := map[string]bool{}
	for i := 0; i < 1000; i++ {
		id := newID()
		if !uuidRE.MatchString(id) || seen[id] {
			t.Fatalf("bad or repeated id %q", id)
		}
		seen[id] = true
	}
}

func TestReplyType(t *testing.T) {
	for in, want := range map[string]string{"execute_request": "execute_reply", "x": "x_reply", "_request": "_request_reply"} {
		if got := replyType(in); got != want {
			t.Errorf("replyType(%q) = %q, want %q", in, got, want)
		}
	}
}

func TestParseConnection(t *testing.T) {
	c, err := ParseConnection([]byte(`{"shell_port":1,"iopub_port":2,"stdin_port":3,"control_port":4,"hb_port":5,"key":"k","kernel_name":"massline"}`))
	if err != nil {
		t.Fatal(err)
	}
	if c.Transport != "tcp" || c.IP != "127.0.0.1" || c.SignatureScheme != SchemeHMACSHA256 || c.HBPort != 5 || c.KernelName != "massline" {
		t.Errorf("parsed %+v", c)
	}
	if got := c.endpoint(7); got != "tcp://127.0.0.1:7" {
		t.Errorf("endpoint = %s", got)
	}
	c.IP = "::1"
	if got := c.endpoint(7); got != "tcp://[::1]:7" {
		t.Errorf("IPv6 endpoint = %s", got)
	}
	for name, js := range map[string]string{
		"bad json":   `{`,
		"scheme":     `{"signature_scheme":"hmac-md5"}`,
		"transport":  `{"transport":"udp"}`,
		"port range": `{"shell_port":70000}`,
	} {
		if _, err := ParseConnection([]byte(js)); err == nil {
			t.Errorf("%s: accepted", name)
		}
	}
	path := filepath.Join(t.TempDir(), "c.json")
	if err := c.WriteFile(path); err != nil {
		t.Fatal(err)
	}
	back, err := LoadConnection(path)
	if err != nil || *back != *c {
		t.Errorf("round trip: %+v, %v", back, err)
	}
	if fi, _ := os.Stat(path); fi.Mode().Perm() != 0o600 {
		t.Errorf("connection file mode %v, want 0600", fi.Mode().Perm())
	}
	if _, err := LoadConnection(filepath.Join(t.TempDir(), "missing.json")); err == nil {
		t.Error("missing file accepted")
	}
	// New refuses an unsupported scheme at startup.
	if _, err := New(&ConnectionInfo{SignatureScheme: "hmac-sha1"}, newFakeEngine(), nil); err == nil {
		t.Error("New accepted hmac-sha1")
	}
}

func FuzzDecode(f *testing.F) {
	s := newSigner("")
	f.Add([]byte("<IDS|MSG>\x00\x00{\"msg_type\":\"x\"}\x00{}\x00{}\x00{}"))
	f.Add([]byte("id\x00<IDS|MSG>\x00sig\x00[]\x00{}\x00{}\x00{}\x00buf"))
	f.Add([]byte("\x00\x00\x00"))
	f.Fuzz(func(t *testing.T, data []byte) {
		frames := bytes.Split(data, []byte{0})
		m, err := decode(frames, s)
		if err == nil && m.header.MsgType == "" {
			t.Error("accepted a message without msg_type")
		}
	})
}
