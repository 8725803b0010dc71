package kernel

import (
	"encoding/json"
	"errors"
	"fmt"
	"net"
	"os"
	"strconv"
	"strings"
)

// SchemeHMACSHA256 is the only message signature scheme the kernel
// supports, and the default when a connection file names none.
const SchemeHMACSHA256 = "hmac-sha256"

// ConnectionInfo is the content of a Jupyter connection file: where the
// kernel's five sockets listen and the key that signs messages.
//
// A port of 0 asks New to pick a free port; Kernel.Connection reports the
// ports actually bound.
type ConnectionInfo struct {
	Transport       string `json:"transport"` // "tcp" (default) or "ipc"
	IP              string `json:"ip"`        // address for tcp, path prefix for ipc
	ShellPort       int    `json:"shell_port"`
	ControlPort     int    `json:"control_port"`
	IOPubPort       int    `json:"iopub_port"`
	StdinPort       int    `json:"stdin_port"`
	HBPort          int    `json:"hb_port"`
	Key             string `json:"key"`              // empty: messages are not signed
	SignatureScheme string `json:"signature_scheme"` // only "hmac-sha256"
	KernelName      string `json:"kernel_name,omitempty"`
}

// LoadConnection reads and checks a connection file.
func LoadConnection(path string) (*ConnectionInfo, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("kernel: reading connection file: %w", err)
	}
	return ParseConnection(data)
}

// ParseConnection parses the JSON of a connection file and checks it.
// Missing transport, ip and signature_scheme take their usual defaults
// ("tcp", "127.0.0.1", "hmac-sha256").
func ParseConnection(data []byte) (*ConnectionInfo, error) {
	var c ConnectionInfo
	if err := json.Unmarshal(data, &c); err != nil {
		return nil, fmt.Errorf("kernel: connection file is not valid JSON: %w", err)
	}
	if err := c.normalise(); err != nil {
		return nil, err
	}
	return &c, nil
}

// normalise fills defaults and rejects values the kernel cannot serve.
func (c *ConnectionInfo) normalise() error {
	if c.Transport == "" {
		c.Transport = "tcp"
	}
	if c.IP == "" {
		c.IP = "127.0.0.1"
	}
	if c.SignatureScheme == "" {
		c.SignatureScheme = SchemeHMACSHA256
	}
	if c.Transport != "tcp" && c.Transport != "ipc" {
		return fmt.Errorf("kernel: unsupported transport %q (want \"tcp\" or \"ipc\")", c.Transport)
	}
	if c.SignatureScheme != SchemeHMACSHA256 {
		return fmt.Errorf("kernel: unsupported signature_scheme %q (only %q is supported)", c.SignatureScheme, SchemeHMACSHA256)
	}
	for _, p := range []struct {
		name string
		port int
	}{
		{"shell_port", c.ShellPort}, {"control_port", c.ControlPort}, {"iopub_port", c.IOPubPort},
		{"stdin_port", c.StdinPort}, {"hb_port", c.HBPort},
	} {
		if p.port < 0 || p.port > 65535 {
			return fmt.Errorf("kernel: %s %d is out of range", p.name, p.port)
		}
	}
	return nil
}

// endpoint is the ZeroMQ-style address of one socket, for example
// "tcp://127.0.0.1:5555" or "ipc:///tmp/kernel-5555" (Jupyter's ipc naming
// is the ip field, a dash and the port).
func (c *ConnectionInfo) endpoint(port int) string {
	if c.Transport == "ipc" {
		return "ipc://" + c.IP + "-" + strconv.Itoa(port)
	}
	return "tcp://" + net.JoinHostPort(c.IP, strconv.Itoa(port))
}

// WriteFile writes c as a connection file readable only by its owner.
func (c *ConnectionInfo) WriteFile(path string) error {
	data, err := json.MarshalIndent(c, "", "  ")
	if err != nil {
		return err
	}
	return os.WriteFile(path, append(data, '\n'), 0o600)
}

// portOf extracts the port from a bound listener address.
func portOf(a net.Addr) (int, error) {
	if a == nil {
		return 0, errors.New("kernel: socket has no listening address")
	}
	if t, ok := a.(*net.TCPAddr); ok {
		return t.Port, nil
	}
	s := a.String()
	i := strings.LastIndexByte(s, ':')
	if i < 0 {
		return 0, fmt.Errorf("kernel: no port in address %q", s)
	}
	return strconv.Atoi(s[i+1:])
}
