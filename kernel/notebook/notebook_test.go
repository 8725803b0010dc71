package notebook

import (
	"bytes"
	"encoding/json"
	"errors"
	"io"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

// TestDemoRoundTrip reads every demo notebook and writes it back: the
// bytes must come out the same (the demos are kept in Jupyter's layout),
// and reading the written copy must give the same notebook.
func TestDemoRoundTrip(t *testing.T) {
	for _, path := range demoNotebooks(t) {
		t.Run(filepath.Base(path), func(t *testing.T) {
			data := readFile(t, path)
			nb, err := Parse(data)
			if err != nil {
				t.Fatal(err)
			}
			out := mustMarshal(t, nb)
			if !bytes.Equal(out, data) {
				t.Errorf("writing the notebook back changed its bytes:\n%s", firstDiff(string(data), string(out)))
			}
			again := mustParse(t, string(out))
			if !reflect.DeepEqual(nb, again) {
				t.Error("reading the written copy gave a different notebook")
			}
			for i, c := range nb.Cells {
				if c.Type == Code && c.ExecutionCount != nil {
					t.Errorf("cell %d: demo notebooks are stored unexecuted, found execution_count %d", i+1, *c.ExecutionCount)
				}
			}
		})
	}
}

func firstDiff(a, b string) string {
	al, bl := strings.Split(a, "\n"), strings.Split(b, "\n")
	for i := 0; i < len(al) && i < len(bl); i++ {
		if al[i] != bl[i] {
			return "line " + itoa(i+1) + ":\n  was: " + al[i] + "\n  now: " + bl[i]
		}
	}
	return "lengths differ: " + itoa(len(al)) + " vs " + itoa(len(bl)) + " lines"
}

func itoa(n int) string { b, _ := json.Marshal(n); return string(b) }

// A notebook written by hand or by another tool: sources and stream text
// as single strings, no cell ids, null execution counts, nbformat 4.2.
const looseNotebook = `{
  "nbformat": 4, "nbformat_minor": 2,
  "metadata": {"kernelspec": {"name": "massline", "display_name": "massline"},
               "custom": {"big": 12345678901234567890123, "pi": 3.141592653589793238, "nested": {"z": 1, "a": [true, null]}}},
  "cells": [
    {"cell_type": "markdown", "metadata": {}, "source": "# Title\n\nSome <b>text</b> & more."},
    {"cell_type": "code", "metadata": {"tags": ["setup"]}, "execution_count": null, "outputs": [],
     "source": "let a = 2 [mm]\nprint a\n"},
    {"cell_type": "code", "metadata": {}, "execution_count": 7,
     "source": ["show x\n", "show y"],
     "outputs": [
       {"output_type": "stream", "name": "stdout", "text": "one\ntwo\n"},
       {"output_type": "display_data", "metadata": {}, "data": {"text/plain": ["a\n", "b"], "image/svg+xml": "<svg>\n</svg>", "application/json": {"k": [1, 2.5]}}},
       {"output_type": "execute_result", "execution_count": 7, "metadata": {}, "data": {"text/plain": "42"}},
       {"output_type": "error", "ename": "E", "evalue": "bad", "traceback": ["line 1", "line 2"]}
     ]},
    {"cell_type": "raw", "metadata": {}, "source": []}
  ]
}`

func TestSourceStringOrList(t *testing.T) {
	nb := mustParse(t, looseNotebook)
	if len(nb.Cells) != 4 {
		t.Fatalf("got %d cells, want 4", len(nb.Cells))
	}
	if got := nb.Cells[1].Source; got != "let a = 2 [mm]\nprint a\n" {
		t.Errorf("string source read as %q", got)
	}
	if got := nb.Cells[2].Source; got != "show x\nshow y" {
		t.Errorf("list source read as %q", got)
	}
	if nb.Cells[1].ExecutionCount != nil {
		t.Errorf("null execution_count read as %d", *nb.Cells[1].ExecutionCount)
	}
	if c := nb.Cells[2].ExecutionCount; c == nil || *c != 7 {
		t.Errorf("execution_count 7 read as %v", c)
	}
	outs := nb.Cells[2].Outputs
	if len(outs) != 4 {
		t.Fatalf("got %d outputs, want 4", len(outs))
	}
	if outs[0].Type != Stream || outs[0].Text != "one\ntwo\n" {
		t.Errorf("stream output read as %+v", outs[0])
	}
	if outs[1].Data["text/plain"] != "a\nb" || outs[1].Data["image/svg+xml"] != "<svg>\n</svg>" {
		t.Errorf("display_data text read as %v", outs[1].Data)
	}
	if outs[3].EName != "E" || outs[3].EValue != "bad" || len(outs[3].Traceback) != 2 {
		t.Errorf("error output read as %+v", outs[3])
	}

	out := string(mustMarshal(t, nb))
	for _, want := range []string{
		"\"nbformat_minor\": 5",
		"\"source\": [\n    \"let a = 2 [mm]\\n\",\n    \"print a\\n\"\n   ]",
		"\"execution_count\": null",
		"\"text\": [\n      \"one\\n\",\n      \"two\\n\"\n     ]",
		"\"image/svg+xml\": [\n       \"<svg>\\n\",\n       \"</svg>\"\n      ]",
		"Some <b>text</b> & more.", // no \u003c escapes, as Jupyter writes
		"12345678901234567890123",  // numbers kept exactly
		"3.141592653589793238",
		"\"tags\": [\n     \"setup\"\n    ]",
		"\"source\": []",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("written notebook lacks %q", want)
		}
	}
	if !strings.HasPrefix(out, "{\n \"cells\": [\n  {\n   \"cell_type\"") || !strings.HasSuffix(out, "}\n") {
		t.Errorf("layout is not Jupyter's (one-space indent, sorted keys, final newline):\n%.200s", out)
	}
	// The metadata keeps unknown keys; the JSON value survives untouched.
	again := mustParse(t, out)
	if !reflect.DeepEqual(again.Metadata, nb.Metadata) {
		t.Errorf("metadata changed in the round trip:\n%v\n%v", nb.Metadata, again.Metadata)
	}
	if !reflect.DeepEqual(again.Cells[2].Outputs, nb.Cells[2].Outputs) {
		t.Error("outputs changed in the round trip")
	}
	// Writing again gives the same bytes (the generated ids are stable).
	if out2 := string(mustMarshal(t, again)); out2 != out {
		t.Errorf("second write differs:\n%s", firstDiff(out, out2))
	}
	path := filepath.Join(t.TempDir(), "loose.ipynb")
	writeTemp(t, path, out)
	nbformatValidate(t, path)
}

func TestCellIDs(t *testing.T) {
	nb := &Notebook{Cells: []*Cell{
		{Type: Markdown, Source: "same"},
		{Type: Markdown, Source: "same"},
		{Type: Code, ID: "keep-me_1", Source: "x"},
		{Type: Code, ID: "keep-me_1", Source: "y"},    // duplicate: replaced
		{Type: Code, ID: "has space", Source: "z"},    // invalid: replaced
		{Type: Code, ID: strings.Repeat("a", 65)},     // too long: replaced
		{Type: Raw, ID: strings.Repeat("b", 64)},      // longest valid: kept
		{Type: Code, ID: "", Source: "let a = 1 [m]"}, // missing: generated
	}}
	ids := cellIDs(nb.Cells)
	seen := map[string]bool{}
	for i, id := range ids {
		if !validID(id) {
			t.Errorf("cell %d: id %q is not valid", i+1, id)
		}
		if seen[id] {
			t.Errorf("cell %d: id %q used twice", i+1, id)
		}
		seen[id] = true
	}
	if ids[2] != "keep-me_1" || ids[6] != strings.Repeat("b", 64) {
		t.Errorf("valid ids were not kept: %q", ids)
	}
	if again := cellIDs(nb.Cells); !reflect.DeepEqual(again, ids) {
		t.Errorf("ids are not stable: %q then %q", ids, again)
	}
	if nb.Cells[0].ID != "" {
		t.Error("Marshal's id generation changed the notebook")
	}
}

func TestSplitLines(t *testing.T) {
	for _, tc := range []struct {
		in   string
		want []string
	}{
		{"", []string{}},
		{"a", []string{"a"}},
		{"a\n", []string{"a\n"}},
		{"a\nb", []string{"a\n", "b"}},
		{"a\r\nb\rc\n\n", []string{"a\r\n", "b\r", "c\n", "\n"}},
		{"x\u2028y\x0cz", []string{"x\u2028", "y\x0c", "z"}},
		{"µ\n°C", []string{"µ\n", "°C"}},
		{"bad\xffutf8\n", []string{"bad\xffutf8\n"}},
	} {
		got := splitLines(tc.in)
		if !reflect.DeepEqual(got, tc.want) {
			t.Errorf("splitLines(%q) = %q, want %q", tc.in, got, tc.want)
		}
		if strings.Join(got, "") != tc.in {
			t.Errorf("splitLines(%q) does not join back", tc.in)
		}
	}
}

func TestCorruptNotebooks(t *testing.T) {
	demo := string(readFile(t, demoNotebooks(t)[0]))
	deep := strings.Repeat("[", 20000) + strings.Repeat("]", 20000)
	for _, tc := range []struct {
		name, data, want string
	}{
		{"empty", "", "file is empty"},
		{"white space", " \n\t", "file is empty"},
		{"truncated", demo[:len(demo)/2], "truncated"},
		{"truncated at the end", demo[:len(demo)-3], "truncated"},
		{"not JSON", "cells: []", "not valid JSON (line 1, column 1)"},
		{"garbage after", `{"nbformat":4,"nbformat_minor":5,"metadata":{},"cells":[]} x`, "not valid JSON"},
		{"top-level list", `[1, 2]`, "holds JSON array, not an object"},
		{"top-level null", `null`, "JSON null"},
		{"no nbformat", `{"cells": []}`, `no "nbformat" field`},
		{"nbformat 3", `{"nbformat": 3, "nbformat_minor": 0, "metadata": {}, "worksheets": []}`, "nbformat 3 is not supported"},
		{"nbformat 5", `{"nbformat": 5, "nbformat_minor": 0, "metadata": {}, "cells": []}`, "nbformat 5 is not supported"},
		{"nbformat a string", `{"nbformat": "4", "cells": []}`, "nbformat must be a whole number"},
		{"nbformat a fraction", `{"nbformat": 4.5, "cells": []}`, "nbformat must be a whole number"},
		{"no cells", `{"nbformat": 4, "nbformat_minor": 5, "metadata": {}}`, `no "cells" list`},
		{"cells an object", `{"nbformat": 4, "nbformat_minor": 5, "metadata": {}, "cells": {"a": 1}}`, `"cells" must be a list of cells, not an object`},
		{"cells a string", `{"nbformat": 4, "cells": "x"}`, `"cells" must be a list of cells, not a string`},
		{"cell a number", `{"nbformat": 4, "cells": [{"cell_type":"raw","source":""}, 3]}`, "cell 2: a cell must be an object, not a number"},
		{"no cell_type", `{"nbformat": 4, "cells": [{"source": "x"}]}`, "cell 1: the cell has no cell_type"},
		{"unknown cell_type", `{"nbformat": 4, "cells": [{"cell_type": "heading", "source": "x"}]}`, `cell 1: unknown cell_type "heading"`},
		{"source a number", `{"nbformat": 4, "cells": [{"cell_type": "code", "source": 12}]}`, "cell 1: source must be a string or a list of strings, not a number"},
		{"source list of numbers", `{"nbformat": 4, "cells": [{"cell_type": "code", "source": [1, 2]}]}`, "cell 1: source must be a string or a list of strings, not a list"},
		{"metadata a list", `{"nbformat": 4, "metadata": [], "cells": []}`, "metadata must be an object, not a list"},
		{"outputs an object", `{"nbformat": 4, "cells": [{"cell_type": "code", "source": "", "outputs": {}}]}`, `cell 1: "outputs" must be a list, not an object`},
		{"unknown output", `{"nbformat": 4, "cells": [{"cell_type": "code", "source": "", "outputs": [{"output_type": "pyout"}]}]}`, `cell 1: output 1: unknown output_type "pyout"`},
		{"traceback a string", `{"nbformat": 4, "cells": [{"cell_type": "code", "source": "", "outputs": [{"output_type": "error", "traceback": "x"}]}]}`, "traceback must be a list of strings"},
		{"execution_count a string", `{"nbformat": 4, "cells": [{"cell_type": "code", "source": "", "execution_count": "1"}]}`, "execution_count must be a whole number"},
		{"deeply nested metadata", `{"nbformat": 4, "cells": [], "metadata": {"x": ` + deep + `}}`, "not valid JSON"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			nb, err := Parse([]byte(tc.data))
			if err == nil {
				t.Fatalf("no error; got %d cells", len(nb.Cells))
			}
			var re *ReadError
			if !errors.As(err, &re) {
				t.Errorf("error is %T, want *ReadError", err)
			}
			if !strings.Contains(err.Error(), tc.want) {
				t.Errorf("error %q does not say %q", err, tc.want)
			}
			if !strings.HasPrefix(err.Error(), "notebook: ") {
				t.Errorf("error %q lacks the package prefix", err)
			}
		})
	}
}

// TestHugeSource reads a cell of several megabytes (fine) and refuses a
// file over MaxSize without reading it all.
func TestHugeSource(t *testing.T) {
	big := strings.Repeat("let a = 1 [m]  # a long line of model text\n", 80000) // ≈ 3.5 MB
	nb := &Notebook{Cells: []*Cell{{Type: Code, Source: big}}}
	data := mustMarshal(t, nb)
	back, err := Read(bytes.NewReader(data))
	if err != nil {
		t.Fatal(err)
	}
	if back.Cells[0].Source != big {
		t.Error("a large source did not survive the round trip")
	}

	head := `{"nbformat": 4, "nbformat_minor": 5, "metadata": {}, "cells": [{"cell_type": "code", "source": "`
	r := io.MultiReader(strings.NewReader(head), endless('x'))
	_, err = Read(r)
	if err == nil || !strings.Contains(err.Error(), "larger than 64 MiB") {
		t.Errorf("oversized notebook: got error %v, want one about the size", err)
	}
}

// endless is a reader that never ends.
type endless byte

func (e endless) Read(p []byte) (int, error) {
	for i := range p {
		p[i] = byte(e)
	}
	return len(p), nil
}

func TestMarshalRefuses(t *testing.T) {
	if _, err := Marshal(nil); err == nil {
		t.Error("Marshal(nil): no error")
	}
	if _, err := Marshal(&Notebook{Format: 3}); err == nil {
		t.Error("Marshal of nbformat 3: no error")
	}
	if _, err := Marshal(&Notebook{Cells: []*Cell{{Type: "heading"}}}); err == nil {
		t.Error("Marshal of an unknown cell type: no error")
	}
	if _, err := Marshal(&Notebook{Cells: []*Cell{{Type: Code, Outputs: []*Output{{Type: "pyout"}}}}}); err == nil {
		t.Error("Marshal of an unknown output type: no error")
	}
	var buf bytes.Buffer
	if err := Write(&buf, &Notebook{}); err != nil || !strings.Contains(buf.String(), `"cells": []`) {
		t.Errorf("Write of an empty notebook: %v\n%s", err, buf.String())
	}
}
