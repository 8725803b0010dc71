package notebook

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"strings"

	"github.com/massline/massline/kernel"
)

// MaxSize is the largest notebook, in bytes, that Read and Parse accept.
const MaxSize = 64 << 20

// Format and FormatMinor are the nbformat version this package writes.
const (
	Format      = 4
	FormatMinor = 5
)

// Notebook is a Jupyter notebook in nbformat 4.
type Notebook struct {
	// Format and FormatMinor are nbformat and nbformat_minor as read. A
	// new notebook may leave them zero; Write writes 4 and at least 5.
	Format, FormatMinor int
	// Metadata is the notebook's metadata (kernelspec, language_info and
	// anything else), kept as read. JSON numbers are json.Number.
	Metadata map[string]any
	// Cells are the cells in order.
	Cells []*Cell
}

// CellType is the type of a cell: "code", "markdown" or "raw".
type CellType string

// The cell types of nbformat 4.
const (
	Code     CellType = "code"
	Markdown CellType = "markdown"
	Raw      CellType = "raw"
)

// Cell is one cell of a notebook.
type Cell struct {
	// ID is the cell id (nbformat 4.5); "" when the file had none.
	ID string
	// Type is code, markdown or raw.
	Type CellType
	// Source is the cell's text, joined into one string.
	Source string
	// Metadata is the cell's metadata, kept as read.
	Metadata map[string]any
	// Attachments are the files attached to a markdown or raw cell, kept
	// as read (nil when none).
	Attachments map[string]any
	// ExecutionCount is the code cell's execution count; nil for a cell
	// that has not run (written as null).
	ExecutionCount *int
	// Outputs are the code cell's outputs.
	Outputs []*Output
}

// OutputType is the type of a code cell's output.
type OutputType string

// The output types of nbformat 4.
const (
	Stream        OutputType = "stream"
	DisplayData   OutputType = "display_data"
	ExecuteResult OutputType = "execute_result"
	Error         OutputType = "error"
)

// Output is one output of a code cell. Which fields mean something depends
// on Type: Name and Text for a stream; Data and Metadata for display_data
// and execute_result (plus ExecutionCount for the latter); EName, EValue
// and Traceback for an error.
type Output struct {
	Type OutputType
	// Name is the stream: "stdout" or "stderr".
	Name string
	// Text is the stream's text, joined into one string.
	Text string
	// Data is the MIME bundle. Text types (text/*, image/svg+xml) are
	// strings joined from their lines; JSON types keep their JSON value.
	Data kernel.Bundle
	// Metadata is the output's metadata, kept as read.
	Metadata map[string]any
	// ExecutionCount is the execute_result's count (nil for null).
	ExecutionCount *int
	// EName, EValue and Traceback describe an error.
	EName, EValue string
	Traceback     []string
}

// ReadError is the error Read and Parse return for input that is not an
// nbformat 4 notebook. Cell is the 1-based number of the cell at fault,
// 0 when the fault is not inside a cell.
type ReadError struct {
	Cell int
	Msg  string
	Err  error // the underlying JSON error, if any
}

// Error implements error.
func (e *ReadError) Error() string {
	if e.Cell > 0 {
		return fmt.Sprintf("notebook: cell %d: %s", e.Cell, e.Msg)
	}
	return "notebook: " + e.Msg
}

// Unwrap returns the underlying error.
func (e *ReadError) Unwrap() error { return e.Err }

// Read reads a notebook from r. Input larger than MaxSize is refused.
func Read(r io.Reader) (*Notebook, error) {
	data, err := io.ReadAll(io.LimitReader(r, MaxSize+1))
	if err != nil {
		return nil, err
	}
	return Parse(data)
}

// Parse decodes a notebook from JSON. It accepts nbformat 4 (any minor
// version) and explains anything else in a *ReadError.
func Parse(data []byte) (nb *Notebook, err error) {
	defer func() {
		// Decoding is plain code on plain data and should never panic;
		// if it does, the caller still gets an error, not a crash.
		if r := recover(); r != nil {
			nb, err = nil, &ReadError{Msg: fmt.Sprintf("internal error while reading: %v", r)}
		}
	}()
	if len(data) > MaxSize {
		return nil, &ReadError{Msg: fmt.Sprintf("file is larger than %d MiB; not read", MaxSize>>20)}
	}
	if len(bytes.TrimSpace(data)) == 0 {
		return nil, &ReadError{Msg: "file is empty"}
	}
	var top map[string]json.RawMessage
	if err := json.Unmarshal(data, &top); err != nil {
		return nil, jsonError(data, err)
	}
	if top == nil {
		return nil, &ReadError{Msg: "not a notebook: the file holds JSON null, not an object"}
	}
	major, ok, err := intField(top, "nbformat")
	if err != nil {
		return nil, &ReadError{Msg: "nbformat " + err.Error()}
	}
	if !ok {
		return nil, &ReadError{Msg: "not a Jupyter notebook: it has no \"nbformat\" field"}
	}
	if major != Format {
		hint := ""
		if major < Format {
			hint = "; convert it first, e.g. with: jupyter nbconvert --to notebook --nbformat 4 FILE"
		}
		return nil, &ReadError{Msg: fmt.Sprintf("nbformat %d is not supported: massline reads nbformat 4 notebooks%s", major, hint)}
	}
	minor, _, err := intField(top, "nbformat_minor")
	if err != nil {
		return nil, &ReadError{Msg: "nbformat_minor " + err.Error()}
	}
	nb = &Notebook{Format: major, FormatMinor: minor}
	if nb.Metadata, err = objectField(top, "metadata"); err != nil {
		return nil, &ReadError{Msg: "metadata " + err.Error()}
	}
	rawCells, ok := top["cells"]
	if !ok {
		return nil, &ReadError{Msg: "not a notebook: it has no \"cells\" list"}
	}
	var cells []json.RawMessage
	if err := json.Unmarshal(rawCells, &cells); err != nil {
		return nil, &ReadError{Msg: "\"cells\" must be a list of cells, not " + kindOf(rawCells)}
	}
	for i, raw := range cells {
		c, err := parseCell(raw)
		if err != nil {
			return nil, &ReadError{Cell: i + 1, Msg: err.Error()}
		}
		nb.Cells = append(nb.Cells, c)
	}
	return nb, nil
}

func parseCell(raw json.RawMessage) (*Cell, error) {
	obj, err := object(raw)
	if err != nil {
		return nil, fmt.Errorf("a cell must be an object, not %s", kindOf(raw))
	}
	c := &Cell{}
	t, _, err := stringField(obj, "cell_type")
	if err != nil {
		return nil, fmt.Errorf("cell_type %v", err)
	}
	c.Type = CellType(t)
	switch c.Type {
	case Code, Markdown, Raw:
	case "":
		return nil, errors.New("the cell has no cell_type")
	default:
		return nil, fmt.Errorf("unknown cell_type %q (want code, markdown or raw)", t)
	}
	if c.ID, _, err = stringField(obj, "id"); err != nil {
		return nil, fmt.Errorf("id %v", err)
	}
	if c.Source, err = multiline(obj, "source"); err != nil {
		return nil, fmt.Errorf("source %v", err)
	}
	if c.Metadata, err = objectField(obj, "metadata"); err != nil {
		return nil, fmt.Errorf("metadata %v", err)
	}
	if c.Type != Code {
		if c.Attachments, err = objectField(obj, "attachments"); err != nil {
			return nil, fmt.Errorf("attachments %v", err)
		}
		for name, a := range c.Attachments {
			if b, ok := a.(map[string]any); ok {
				c.Attachments[name] = map[string]any(joinBundle(b))
			}
		}
		return c, nil
	}
	if c.ExecutionCount, err = countField(obj, "execution_count"); err != nil {
		return nil, fmt.Errorf("execution_count %v", err)
	}
	var outs []json.RawMessage
	if raw, ok := obj["outputs"]; ok && !isNull(raw) {
		if err := json.Unmarshal(raw, &outs); err != nil {
			return nil, fmt.Errorf("\"outputs\" must be a list, not %s", kindOf(raw))
		}
	}
	for j, raw := range outs {
		o, err := parseOutput(raw)
		if err != nil {
			return nil, fmt.Errorf("output %d: %v", j+1, err)
		}
		c.Outputs = append(c.Outputs, o)
	}
	return c, nil
}

func parseOutput(raw json.RawMessage) (*Output, error) {
	obj, err := object(raw)
	if err != nil {
		return nil, fmt.Errorf("an output must be an object, not %s", kindOf(raw))
	}
	t, _, err := stringField(obj, "output_type")
	if err != nil {
		return nil, fmt.Errorf("output_type %v", err)
	}
	o := &Output{Type: OutputType(t)}
	switch o.Type {
	case Stream:
		if o.Name, _, err = stringField(obj, "name"); err != nil {
			return nil, fmt.Errorf("name %v", err)
		}
		if o.Text, err = multiline(obj, "text"); err != nil {
			return nil, fmt.Errorf("text %v", err)
		}
	case DisplayData, ExecuteResult:
		data, err := objectField(obj, "data")
		if err != nil {
			return nil, fmt.Errorf("data %v", err)
		}
		o.Data = joinBundle(data)
		if o.Metadata, err = objectField(obj, "metadata"); err != nil {
			return nil, fmt.Errorf("metadata %v", err)
		}
		if o.Type == ExecuteResult {
			if o.ExecutionCount, err = countField(obj, "execution_count"); err != nil {
				return nil, fmt.Errorf("execution_count %v", err)
			}
		}
	case Error:
		if o.EName, _, err = stringField(obj, "ename"); err != nil {
			return nil, fmt.Errorf("ename %v", err)
		}
		if o.EValue, _, err = stringField(obj, "evalue"); err != nil {
			return nil, fmt.Errorf("evalue %v", err)
		}
		if raw, ok := obj["traceback"]; ok && !isNull(raw) {
			if err := json.Unmarshal(raw, &o.Traceback); err != nil {
				return nil, fmt.Errorf("traceback must be a list of strings, not %s", kindOf(raw))
			}
		}
	case "":
		return nil, errors.New("the output has no output_type")
	default:
		return nil, fmt.Errorf("unknown output_type %q (want stream, display_data, execute_result or error)", t)
	}
	return o, nil
}

// joinBundle joins the lines of every non-JSON MIME value given as a list
// of strings, as nbformat does on reading.
func joinBundle(data map[string]any) kernel.Bundle {
	if data == nil {
		return nil
	}
	b := kernel.Bundle{}
	for k, v := range data {
		if list, ok := v.([]any); ok && !isJSONMIME(k) {
			var s strings.Builder
			all := true
			for _, x := range list {
				str, ok := x.(string)
				if !ok {
					all = false
					break
				}
				s.WriteString(str)
			}
			if all {
				b[k] = s.String()
				continue
			}
		}
		b[k] = v
	}
	return b
}

// isJSONMIME reports whether a MIME type carries a JSON value
// (application/json or application/…+json).
func isJSONMIME(mime string) bool {
	return mime == "application/json" || strings.HasPrefix(mime, "application/") && strings.HasSuffix(mime, "+json")
}

func object(raw json.RawMessage) (map[string]json.RawMessage, error) {
	var obj map[string]json.RawMessage
	if err := json.Unmarshal(raw, &obj); err != nil {
		return nil, err
	}
	if obj == nil {
		return nil, errors.New("null")
	}
	return obj, nil
}

func isNull(raw json.RawMessage) bool { return string(bytes.TrimSpace(raw)) == "null" }

// kindOf names the JSON type of a raw value for an error message.
func kindOf(raw json.RawMessage) string {
	s := bytes.TrimSpace(raw)
	if len(s) == 0 {
		return "nothing"
	}
	switch s[0] {
	case '{':
		return "an object"
	case '[':
		return "a list"
	case '"':
		return "a string"
	case 't', 'f':
		return "a boolean"
	case 'n':
		return "null"
	}
	return "a number"
}

func stringField(obj map[string]json.RawMessage, key string) (string, bool, error) {
	raw, ok := obj[key]
	if !ok || isNull(raw) {
		return "", false, nil
	}
	var s string
	if err := json.Unmarshal(raw, &s); err != nil {
		return "", false, fmt.Errorf("must be a string, not %s", kindOf(raw))
	}
	return s, true, nil
}

// multiline decodes a string, or a list of strings joined together.
func multiline(obj map[string]json.RawMessage, key string) (string, error) {
	raw, ok := obj[key]
	if !ok || isNull(raw) {
		return "", nil
	}
	var s string
	if err := json.Unmarshal(raw, &s); err == nil {
		return s, nil
	}
	var list []string
	if err := json.Unmarshal(raw, &list); err != nil {
		return "", fmt.Errorf("must be a string or a list of strings, not %s", kindOf(raw))
	}
	return strings.Join(list, ""), nil
}

func intField(obj map[string]json.RawMessage, key string) (int, bool, error) {
	raw, ok := obj[key]
	if !ok || isNull(raw) {
		return 0, false, nil
	}
	var f float64
	if err := json.Unmarshal(raw, &f); err != nil || f != math.Trunc(f) || math.Abs(f) > 1e9 {
		return 0, false, fmt.Errorf("must be a whole number, not %s", strings.TrimSpace(shorten(string(raw))))
	}
	return int(f), true, nil
}

func countField(obj map[string]json.RawMessage, key string) (*int, error) {
	n, ok, err := intField(obj, key)
	if err != nil || !ok {
		return nil, err
	}
	return &n, nil
}

// objectField decodes an object with numbers kept exactly (json.Number).
func objectField(obj map[string]json.RawMessage, key string) (map[string]any, error) {
	raw, ok := obj[key]
	if !ok || isNull(raw) {
		return nil, nil
	}
	dec := json.NewDecoder(bytes.NewReader(raw))
	dec.UseNumber()
	var m map[string]any
	if err := dec.Decode(&m); err != nil {
		return nil, fmt.Errorf("must be an object, not %s", kindOf(raw))
	}
	return m, nil
}

func shorten(s string) string {
	if len(s) > 40 {
		return s[:40] + "…"
	}
	return s
}

// jsonError turns a JSON syntax error into a message with a line and
// column.
func jsonError(data []byte, err error) error {
	var se *json.SyntaxError
	if errors.As(err, &se) {
		// Offset counts the bytes read, the offending one included.
		off := int(min(max(se.Offset, 0), int64(len(data))))
		at := max(off-1, 0)
		line := 1 + bytes.Count(data[:at], []byte("\n"))
		col := at - bytes.LastIndexByte(data[:at], '\n')
		if off >= len(bytes.TrimRight(data, " \t\r\n")) {
			return &ReadError{Msg: fmt.Sprintf("not valid JSON: the file ends in the middle of a value (truncated?) at line %d", line), Err: err}
		}
		return &ReadError{Msg: fmt.Sprintf("not valid JSON (line %d, column %d): %v", line, col, se), Err: err}
	}
	var te *json.UnmarshalTypeError
	if errors.As(err, &te) {
		return &ReadError{Msg: "not a notebook: the file holds JSON " + te.Value + ", not an object", Err: err}
	}
	return &ReadError{Msg: "not valid JSON: " + err.Error(), Err: err}
}
