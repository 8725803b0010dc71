package main

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/massline/massline/kernel"
	"github.com/massline/massline/kernel/notebook"
)

// childEnv makes the test binary act as the massline command (Jupyter
// launches it from a kernelspec), so the Jupyter tests drive exactly the
// code under test without building a separate program.
const childEnv = "MASSLINE_CLI_TEST_CHILD"

func TestMain(m *testing.M) {
	if os.Getenv(childEnv) != "" {
		os.Exit(run(os.Args[1:], os.Stdout, os.Stderr))
	}
	os.Exit(m.Run())
}

const python = "/usr/bin/python3"

// requirePython skips when /usr/bin/python3 cannot import the modules
// and CI is unset; under CI a missing tool is a failure.
func requirePython(t *testing.T, modules ...string) {
	t.Helper()
	why := ""
	if _, err := os.Stat(python); err != nil {
		why = python + " not found"
	} else if out, err := exec.Command(python, "-c", "import "+strings.Join(modules, ", ")).CombinedOutput(); err != nil {
		why = fmt.Sprintf("python modules %v missing: %s", modules, strings.TrimSpace(string(out)))
	}
	if why == "" {
		return
	}
	if os.Getenv("CI") != "" {
		t.Fatalf("CI is set and a required tool is missing: %s", why)
	}
	t.Skip(why)
}

// installSpec writes a kernelspec named massline into a fresh Jupyter
// data directory and returns the environment that points Jupyter at it.
func installSpec(t *testing.T) []string {
	t.Helper()
	bin, err := os.Executable()
	if err != nil {
		t.Fatal(err)
	}
	data := t.TempDir()
	dir := filepath.Join(data, "kernels", "massline")
	if err := kernel.WriteKernelSpec(dir, bin); err != nil {
		t.Fatal(err)
	}
	// Add the child switch to the spec's environment.
	p := filepath.Join(dir, "kernel.json")
	b, _ := os.ReadFile(p)
	var spec map[string]any
	if err := json.Unmarshal(b, &spec); err != nil {
		t.Fatal(err)
	}
	spec["env"] = map[string]string{childEnv: "1"}
	b, _ = json.Marshal(spec)
	os.WriteFile(p, b, 0o644)
	return []string{"JUPYTER_PATH=" + data, "JUPYTER_DATA_DIR=" + data, "JUPYTER_RUNTIME_DIR=" + t.TempDir()}
}

func runPython(t *testing.T, script string, env []string, args ...string) []byte {
	t.Helper()
	path := filepath.Join(t.TempDir(), "script.py")
	os.WriteFile(path, []byte(script), 0o644)
	ctx, cancel := context.WithTimeout(context.Background(), 5*time.Minute)
	defer cancel()
	cmd := exec.CommandContext(ctx, python, append([]string{path}, args...)...)
	cmd.Env = append(os.Environ(), env...)
	var stderr strings.Builder
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("python failed: %v\nstdout:\n%s\nstderr:\n%s", err, out, stderr.String())
	}
	return out
}

const smallModel = `species dye { diffusivity = 4e-10 [m^2/s] }
body bead = sphere(radius = 1 [mm])
balance dye in bead
boundary bead.centre: symmetry
boundary bead.surface: fixed(1 [mol/m^3])
initially bead: dye = 0 [mol/m^3]
run until 1 [h] every 5 [min]`

// The Jupyter project's kernel test suite (jupyter_kernel_test), with
// every optional check that applies to the language filled in.
const kernelSuite = `
import sys, unittest
import jupyter_kernel_test as jkt

class MasslineTests(jkt.KernelTests):
    kernel_name = "massline"
    language_name = "massline"
    file_extension = ".mln"
    code_hello_world = 'print "hello, world"'
    completion_samples = [{"text": "spec", "matches": {"species"}}, {"text": "body b = sph", "matches": {"sphere"}}, {"text": "let x = 2 [mmo", "matches": {"mmol"}}]
    complete_code_samples = ["let a = 1 [m]", "species dye { diffusivity = 1e-9 [m^2/s] }"]
    incomplete_code_samples = ["species dye {", "let a = 1 [m] +"]
    invalid_code_samples = ["let = = 3", "let a = 1 [m] )"]
    code_generate_error = "let a = 1 [m] + 1 [s]"
    code_execute_result = [{"code": "let two = 2\ntwo * 21", "result": "42"}, {"code": "let w = 1.5 [mm]\nw", "result": "1.5 [mm]"}]
    code_display_data = [{"code": SMALL_MODEL + "\nshow profile(dye)", "mime": "image/svg+xml"}, {"code": SMALL_MODEL + "\nshow time_to(dye, 50 [%])", "mime": "text/html"}]
    code_inspect_sample = "species"

suite = unittest.TestLoader().loadTestsFromTestCase(MasslineTests)
result = unittest.TextTestRunner(verbosity=2, stream=sys.stdout).run(suite)
print("RAN", result.testsRun, "SKIPPED", len(result.skipped), "FAILED", len(result.failures) + len(result.errors))
sys.exit(0 if result.wasSuccessful() else 1)
`

func TestJupyterKernelSuite(t *testing.T) {
	requirePython(t, "jupyter_client", "jupyter_kernel_test")
	env := installSpec(t)
	script := strings.Replace(kernelSuite, "SMALL_MODEL", fmt.Sprintf("%q", smallModel), 2)
	out := runPython(t, script, env)
	t.Logf("%s", out)
	if !strings.Contains(string(out), "FAILED 0") {
		t.Error("the kernel test suite failed")
	}
}

// nbclient runs every notebook in notebooks/ through Jupyter, validates
// the executed notebook, writes it to the output directory and reports
// the MIME types of the outputs.
const nbScript = `
import json, os, sys, nbformat
from nbclient import NotebookClient
outdir = sys.argv[1]
out = {}
for path in sys.argv[2:]:
    nb = nbformat.read(path, as_version=4)
    NotebookClient(nb, kernel_name="massline", timeout=120, resources={"metadata": {"path": os.path.dirname(path)}}).execute()
    nbformat.validate(nb)
    nbformat.write(nb, os.path.join(outdir, os.path.basename(path)))
    mimes = []
    for c in nb.cells:
        for o in c.get("outputs", []):
            if o["output_type"] in ("display_data", "execute_result"):
                mimes.extend(o["data"].keys())
            else:
                mimes.append(o["output_type"])
    out[path] = mimes
print(json.dumps(out))
`

func TestJupyterNotebooks(t *testing.T) {
	requirePython(t, "nbclient", "nbformat")
	env := installSpec(t)
	nbs, _ := filepath.Glob("../../notebooks/*.ipynb")
	if len(nbs) == 0 {
		t.Fatal("no notebooks in notebooks/")
	}
	outdir := t.TempDir()
	out := runPython(t, nbScript, env, append([]string{outdir}, nbs...)...)
	var mimes map[string][]string
	if err := json.Unmarshal(out, &mimes); err != nil {
		t.Fatalf("%v: %s", err, out)
	}
	for nb, ms := range mimes {
		joined := strings.Join(ms, " ")
		if !strings.Contains(joined, "image/svg+xml") {
			t.Errorf("%s: no SVG output among %v", nb, ms)
		}
		if strings.Contains(joined, "error") {
			t.Errorf("%s: a cell failed: %v", nb, ms)
		}
	}
	// The same notebooks run headless (no Jupyter) must give the same
	// numbers in every application/json output.
	for _, path := range nbs {
		viaJupyter := readNotebook(t, filepath.Join(outdir, filepath.Base(path)))
		headless := readNotebook(t, path)
		if _, err := notebook.Execute(context.Background(), headless, &notebook.Options{Dir: filepath.Dir(path)}); err != nil {
			t.Fatalf("%s headless: %v", path, err)
		}
		a, b := jsonOutputs(viaJupyter), jsonOutputs(headless)
		if len(a) != len(b) || len(a) == 0 {
			t.Errorf("%s: %d JSON outputs through Jupyter, %d headless", path, len(a), len(b))
			continue
		}
		for i := range a {
			if d := numericDiff(a[i], b[i]); d > 1e-9 {
				t.Errorf("%s: output %d differs by %.2e between Jupyter and headless", path, i, d)
			}
		}
	}
}

func readNotebook(t *testing.T, path string) *notebook.Notebook {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	nb, err := notebook.Read(f)
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	return nb
}

// jsonOutputs collects the application/json data of every rich output,
// normalised through encoding/json.
func jsonOutputs(nb *notebook.Notebook) []any {
	var out []any
	for _, c := range nb.Cells {
		for _, o := range c.Outputs {
			if v, ok := o.Data["application/json"]; ok {
				b, _ := json.Marshal(v)
				var x any
				json.Unmarshal(b, &x)
				out = append(out, x)
			}
		}
	}
	return out
}

// numericDiff is the largest relative difference between numbers at the
// same place in two JSON values (1 when their shapes differ).
func numericDiff(a, b any) float64 {
	switch x := a.(type) {
	case float64:
		y, ok := b.(float64)
		if !ok {
			return 1
		}
		return math.Abs(x-y) / math.Max(1e-300, math.Max(math.Abs(x), math.Abs(y)))
	case []any:
		y, ok := b.([]any)
		if !ok || len(x) != len(y) {
			return 1
		}
		d := 0.0
		for i := range x {
			d = math.Max(d, numericDiff(x[i], y[i]))
		}
		return d
	case map[string]any:
		y, ok := b.(map[string]any)
		if !ok || len(x) != len(y) {
			return 1
		}
		d := 0.0
		for k := range x {
			d = math.Max(d, numericDiff(x[k], y[k]))
		}
		return d
	}
	if fmt.Sprint(a) != fmt.Sprint(b) {
		return 1
	}
	return 0
}
