package notebook

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"io"
	"strings"
	"unicode/utf8"
)

// Write writes nb to w as nbformat 4.5 JSON (see Marshal).
func Write(w io.Writer, nb *Notebook) error {
	data, err := Marshal(nb)
	if err != nil {
		return err
	}
	_, err = w.Write(data)
	return err
}

// Marshal encodes nb as nbformat 4.5 JSON laid out as Jupyter writes it:
// keys sorted, an indent of one space, no HTML escaping, multi-line
// strings (sources, stream text, text/* and image/svg+xml data) split into
// lists of lines that keep their line ends, and a final newline. Every
// cell gets a valid, unique id: a cell whose id is missing, malformed or
// already taken gets one derived from its type and source. nb itself is
// not changed.
func Marshal(nb *Notebook) ([]byte, error) {
	if nb == nil {
		return nil, fmt.Errorf("notebook: nil notebook")
	}
	minor := max(nb.FormatMinor, FormatMinor)
	if nb.Format != 0 && nb.Format != Format {
		return nil, fmt.Errorf("notebook: cannot write nbformat %d", nb.Format)
	}
	ids := cellIDs(nb.Cells)
	cells := make([]any, 0, len(nb.Cells))
	for i, c := range nb.Cells {
		if c == nil {
			return nil, fmt.Errorf("notebook: cell %d is nil", i+1)
		}
		m := map[string]any{
			"id":        ids[i],
			"cell_type": string(c.Type),
			"metadata":  objectOrEmpty(c.Metadata),
			"source":    splitLines(c.Source),
		}
		switch c.Type {
		case Code:
			m["execution_count"] = count(c.ExecutionCount)
			outs := make([]any, 0, len(c.Outputs))
			for j, o := range c.Outputs {
				t, err := outputTree(o)
				if err != nil {
					return nil, fmt.Errorf("notebook: cell %d, output %d: %v", i+1, j+1, err)
				}
				outs = append(outs, t)
			}
			m["outputs"] = outs
		case Markdown, Raw:
			if c.Attachments != nil {
				att := map[string]any{}
				for name, a := range c.Attachments {
					if b, ok := a.(map[string]any); ok {
						att[name] = splitBundle(b)
					} else {
						att[name] = a
					}
				}
				m["attachments"] = att
			}
		default:
			return nil, fmt.Errorf("notebook: cell %d has unknown type %q", i+1, c.Type)
		}
		cells = append(cells, m)
	}
	top := map[string]any{
		"nbformat":       Format,
		"nbformat_minor": minor,
		"metadata":       objectOrEmpty(nb.Metadata),
		"cells":          cells,
	}
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	enc.SetIndent("", " ")
	if err := enc.Encode(top); err != nil {
		return nil, fmt.Errorf("notebook: %v", err)
	}
	return buf.Bytes(), nil
}

func outputTree(o *Output) (map[string]any, error) {
	if o == nil {
		return nil, fmt.Errorf("nil output")
	}
	m := map[string]any{"output_type": string(o.Type)}
	switch o.Type {
	case Stream:
		name := o.Name
		if name == "" {
			name = "stdout"
		}
		m["name"] = name
		m["text"] = splitLines(o.Text)
	case DisplayData, ExecuteResult:
		m["data"] = splitBundle(o.Data)
		m["metadata"] = objectOrEmpty(o.Metadata)
		if o.Type == ExecuteResult {
			m["execution_count"] = count(o.ExecutionCount)
		}
	case Error:
		m["ename"] = o.EName
		m["evalue"] = o.EValue
		tb := o.Traceback
		if tb == nil {
			tb = []string{}
		}
		m["traceback"] = tb
	default:
		return nil, fmt.Errorf("unknown output type %q", o.Type)
	}
	return m, nil
}

// splitBundle splits the text values of a MIME bundle into lines, as
// nbformat does for text/* types, image/svg+xml and application/javascript.
func splitBundle(data map[string]any) map[string]any {
	out := make(map[string]any, len(data))
	for k, v := range data {
		if s, ok := v.(string); ok && (strings.HasPrefix(k, "text/") || k == "image/svg+xml" || k == "application/javascript") {
			out[k] = splitLines(s)
			continue
		}
		out[k] = v
	}
	return out
}

func objectOrEmpty(m map[string]any) map[string]any {
	if m == nil {
		return map[string]any{}
	}
	return m
}

func count(n *int) any {
	if n == nil {
		return nil
	}
	return *n
}

// splitLines splits s into lines that keep their line ends, at the same
// line boundaries as Python's str.splitlines (which nbformat uses): \n,
// \r, \r\n, \v, \f, \x1c–\x1e, \x85, U+2028 and U+2029. Joining the lines
// gives s back; "" gives an empty list.
func splitLines(s string) []string {
	lines := []string{}
	start := 0
	for i := 0; i < len(s); {
		r, size := rune(s[i]), 1
		if r >= 0x80 {
			r, size = utf8.DecodeRuneInString(s[i:])
		}
		end := -1
		switch r {
		case '\n', '\v', '\f', 0x1c, 0x1d, 0x1e, 0x85, 0x2028, 0x2029:
			end = i + size
		case '\r':
			end = i + 1
			if end < len(s) && s[end] == '\n' {
				end++
			}
		}
		if end < 0 {
			i += size
			continue
		}
		lines = append(lines, s[start:end])
		start, i = end, end
	}
	if start < len(s) {
		lines = append(lines, s[start:])
	}
	return lines
}

// validID reports whether id is a valid nbformat cell id: 1 to 64
// characters from [a-zA-Z0-9-_].
func validID(id string) bool {
	if len(id) == 0 || len(id) > 64 {
		return false
	}
	for i := 0; i < len(id); i++ {
		c := id[i]
		if !(c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' || c == '-' || c == '_') {
			return false
		}
	}
	return true
}

// cellIDs returns an id for every cell: its own when valid and not used by
// an earlier cell, otherwise 8 hex digits of a hash of its type and
// source (and, on a clash, a counter), so that the same notebook always
// gets the same ids.
func cellIDs(cells []*Cell) []string {
	ids := make([]string, len(cells))
	taken := map[string]bool{}
	for i, c := range cells {
		if c != nil && validID(c.ID) && !taken[c.ID] {
			ids[i] = c.ID
			taken[c.ID] = true
		}
	}
	for i, c := range cells {
		if ids[i] != "" || c == nil {
			continue
		}
		for n := 0; ; n++ {
			h := sha256.Sum256(fmt.Appendf(nil, "%s\x00%s\x00%d", c.Type, c.Source, n))
			id := hex.EncodeToString(h[:4])
			if !taken[id] {
				ids[i] = id
				taken[id] = true
				break
			}
		}
	}
	return ids
}
