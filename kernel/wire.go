package kernel

import (
	"bytes"
	"crypto/hmac"
	"crypto/rand"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"hash"
	"sync"
	"time"
)

// ProtocolVersion is the version of the Jupyter messaging protocol the
// kernel speaks; it is written into every header and kernel_info_reply.
const ProtocolVersion = "5.3"

// delimiter separates the routing identities from the signed message.
var delimiter = []byte("<IDS|MSG>")

// header is the header of a Jupyter message.
type header struct {
	MsgID    string `json:"msg_id"`
	Session  string `json:"session"`
	Username string `json:"username"`
	Date     string `json:"date"`
	MsgType  string `json:"msg_type"`
	Version  string `json:"version"`
}

// message is one decoded incoming message. The raw header is kept byte for
// byte so that replies carry it unchanged as their parent_header.
type message struct {
	ids       [][]byte
	header    header
	rawHeader []byte
	parent    []byte
	metadata  []byte
	content   []byte
	buffers   [][]byte
}

// errUnsigned and friends classify messages that are dropped.
var (
	errNoDelimiter = errors.New("no <IDS|MSG> delimiter")
	errTooFew      = errors.New("too few frames after the delimiter")
	errBadSig      = errors.New("signature does not match")
	errReplay      = errors.New("signature seen before (replayed message)")
)

// signer signs outgoing messages and verifies incoming ones with
// HMAC-SHA256. With an empty key nothing is signed or checked. It also
// remembers recent signatures to refuse replayed messages.
type signer struct {
	key []byte
	mu  sync.Mutex
	// seen holds the last len(ring) signatures accepted.
	seen map[string]struct{}
	ring []string
	next int
}

// replayMemory is how many accepted signatures are remembered.
const replayMemory = 1 << 16

func newSigner(key string) *signer {
	s := &signer{}
	if key != "" {
		s.key = []byte(key)
		s.seen = make(map[string]struct{})
		s.ring = make([]string, replayMemory)
	}
	return s
}

// sign returns the hex HMAC over the four signed frames, or "" with no key.
func (s *signer) sign(parts ...[]byte) []byte {
	if s.key == nil {
		return []byte{}
	}
	m := hmac.New(sha256.New, s.key)
	return s.sum(m, parts)
}

func (s *signer) sum(m hash.Hash, parts [][]byte) []byte {
	for _, p := range parts {
		m.Write(p)
	}
	out := make([]byte, hex.EncodedLen(m.Size()))
	hex.Encode(out, m.Sum(nil))
	return out
}

// verify checks sig against the four signed frames in constant time and
// refuses a signature already accepted once.
func (s *signer) verify(sig []byte, parts ...[]byte) error {
	if s.key == nil {
		return nil
	}
	want := s.sum(hmac.New(sha256.New, s.key), parts)
	// Hex from other implementations may be upper case.
	got := bytes.ToLower(sig)
	if !hmac.Equal(want, got) {
		return errBadSig
	}
	s.mu.Lock()
	defer s.mu.Unlock()
	k := string(want)
	if _, dup := s.seen[k]; dup {
		return errReplay
	}
	if old := s.ring[s.next]; old != "" {
		delete(s.seen, old)
	}
	s.ring[s.next] = k
	s.next = (s.next + 1) % len(s.ring)
	s.seen[k] = struct{}{}
	return nil
}

// decode splits raw frames into a message, checking framing, signature and
// that header, parent_header, metadata and content are JSON objects.
func decode(frames [][]byte, s *signer) (*message, error) {
	at := -1
	for i, f := range frames {
		if bytes.Equal(f, delimiter) {
			at = i
			break
		}
	}
	if at < 0 {
		return nil, errNoDelimiter
	}
	rest := frames[at+1:]
	if len(rest) < 5 {
		return nil, fmt.Errorf("%w: %d", errTooFew, len(rest))
	}
	if err := s.verify(rest[0], rest[1], rest[2], rest[3], rest[4]); err != nil {
		return nil, err
	}
	names := [...]string{"header", "parent_header", "metadata", "content"}
	for i, name := range names {
		if !isJSONObject(rest[1+i]) {
			return nil, fmt.Errorf("%s is not a JSON object", name)
		}
	}
	m := &message{
		ids:       frames[:at],
		rawHeader: rest[1],
		parent:    rest[2],
		metadata:  rest[3],
		content:   rest[4],
		buffers:   rest[5:],
	}
	if err := json.Unmarshal(m.rawHeader, &m.header); err != nil {
		return nil, fmt.Errorf("header: %v", err)
	}
	if m.header.MsgType == "" {
		return nil, errors.New("header has no msg_type")
	}
	return m, nil
}

// isJSONObject reports whether b is valid JSON whose top level is an object.
func isJSONObject(b []byte) bool {
	t := bytes.TrimLeft(b, " \t\r\n")
	return len(t) > 0 && t[0] == '{' && json.Valid(t)
}

// marshal encodes v as compact JSON without HTML escaping.
func marshal(v any) ([]byte, error) {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	if err := enc.Encode(v); err != nil {
		return nil, err
	}
	return bytes.TrimRight(buf.Bytes(), "\n"), nil
}

// encode builds the frames of an outgoing message: routing prefix,
// delimiter, signature, header, parent_header, metadata, content.
func encode(prefix [][]byte, s *signer, h header, parent []byte, content any) ([][]byte, error) {
	hb, err := marshal(h)
	if err != nil {
		return nil, err
	}
	cb, err := marshal(content)
	if err != nil {
		return nil, err
	}
	if len(parent) == 0 {
		parent = []byte("{}")
	}
	meta := []byte("{}")
	frames := make([][]byte, 0, len(prefix)+6)
	frames = append(frames, prefix...)
	frames = append(frames, delimiter, s.sign(hb, parent, meta, cb), hb, parent, meta, cb)
	return frames, nil
}

// newID returns a random version-4 UUID string from crypto/rand.
func newID() string {
	var b [16]byte
	_, _ = rand.Read(b[:]) // never fails (crypto/rand documents it)
	b[6] = b[6]&0x0f | 0x40
	b[8] = b[8]&0x3f | 0x80
	var out [36]byte
	hex.Encode(out[0:8], b[0:4])
	out[8] = '-'
	hex.Encode(out[9:13], b[4:6])
	out[13] = '-'
	hex.Encode(out[14:18], b[6:8])
	out[18] = '-'
	hex.Encode(out[19:23], b[8:10])
	out[23] = '-'
	hex.Encode(out[24:], b[10:])
	return string(out[:])
}

// isoNow is the current time in ISO 8601 with microseconds and a UTC zone.
func isoNow() string {
	return time.Now().UTC().Format("2006-01-02T15:04:05.000000Z07:00")
}
