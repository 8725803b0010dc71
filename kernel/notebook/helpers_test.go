package notebook

import (
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
)

// demoNotebooks returns the paths of the demo notebooks shipped in
// notebooks/.
func demoNotebooks(t *testing.T) []string {
	t.Helper()
	paths, err := filepath.Glob("../../notebooks/*.ipynb")
	if err != nil {
		t.Fatal(err)
	}
	if len(paths) < 3 {
		t.Fatalf("want at least 3 demo notebooks, found %d", len(paths))
	}
	return paths
}

func readFile(t *testing.T, path string) []byte {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return b
}

func mustParse(t *testing.T, data string) *Notebook {
	t.Helper()
	nb, err := Parse([]byte(data))
	if err != nil {
		t.Fatalf("Parse: %v", err)
	}
	return nb
}

func mustMarshal(t *testing.T, nb *Notebook) []byte {
	t.Helper()
	b, err := Marshal(nb)
	if err != nil {
		t.Fatalf("Marshal: %v", err)
	}
	return b
}

const python = "/usr/bin/python3"

// validateScript validates each notebook named on the command line with
// nbformat's own validator and prints one line per invalid file. Warnings
// are errors: nbformat repairs a missing or duplicate cell id with only a
// warning, and such a file is not valid nbformat 4.5.
const validateScript = `
import sys, json, warnings, nbformat
warnings.simplefilter("error")
bad = 0
for path in sys.argv[1:]:
    try:
        with open(path, encoding="utf-8") as f:
            nb = nbformat.from_dict(json.load(f))
        nbformat.validate(nb)
    except Exception as e:
        bad += 1
        print(path + ": " + (str(e).splitlines() or [repr(e)])[0])
sys.exit(1 if bad else 0)
`

// nbformatValidate checks files with the nbformat package of the system
// Python. Without it the test is skipped, unless CI is set: on CI a missing
// validator is a failure.
func nbformatValidate(t *testing.T, files ...string) {
	t.Helper()
	if err := exec.Command(python, "-c", "import nbformat").Run(); err != nil {
		if os.Getenv("CI") != "" {
			t.Fatalf("CI is set but %s cannot import nbformat: %v", python, err)
		}
		t.Skipf("%s with nbformat is not available: %v", python, err)
	}
	out, err := exec.Command(python, append([]string{"-c", validateScript}, files...)...).CombinedOutput()
	if err != nil {
		t.Errorf("nbformat.validate rejected written notebooks: %v\n%s", err, strings.TrimSpace(string(out)))
	}
}

func writeTemp(t *testing.T, path, data string) {
	t.Helper()
	if err := os.WriteFile(path, []byte(data), 0o644); err != nil {
		t.Fatal(err)
	}
}
