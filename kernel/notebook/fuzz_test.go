package notebook

import (
	"bytes"
	"testing"
)

// FuzzRead feeds the reader arbitrary bytes. It must never panic; what it
// accepts must write, read back and write again to the same bytes.
func FuzzRead(f *testing.F) {
	for _, seed := range []string{
		looseNotebook,
		`{"nbformat": 4, "nbformat_minor": 5, "metadata": {}, "cells": []}`,
		`{"nbformat": 4, "cells": [{"cell_type": "code", "source": ["a\r\n", "b"], "execution_count": null, "outputs": [{"output_type": "stream", "name": "stdout", "text": "x"}]}]}`,
		`{"nbformat": 4, "cells": [{"cell_type": "markdown", "id": "x", "source": "", "attachments": {"a.png": {"image/png": ["aGk=\n"]}}}]}`,
		`{"nbformat": 3, "worksheets": []}`,
		`{"nbformat": 4, "cells": {}}`,
		`{"nbformat": 4, "cells": [`,
		`[]`,
		"",
	} {
		f.Add([]byte(seed))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		nb, err := Parse(data)
		if err != nil {
			return
		}
		out, err := Marshal(nb)
		if err != nil {
			t.Fatalf("a notebook that reads does not write: %v", err)
		}
		back, err := Parse(out)
		if err != nil {
			t.Fatalf("a written notebook does not read back: %v\n%s", err, out)
		}
		out2, err := Marshal(back)
		if err != nil {
			t.Fatalf("second write: %v", err)
		}
		if !bytes.Equal(out, out2) {
			t.Fatalf("writing is not stable:\n%s\n---\n%s", out, out2)
		}
		_ = HTML(back, "fuzz")
	})
}
