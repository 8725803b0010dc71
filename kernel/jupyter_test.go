package kernel

import (
	"context"
	"encoding/json"
	"fmt"
	"os"
	"os/exec"
	"os/signal"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// childEnv, when set, makes the test binary act as a kernel process that
// Jupyter launched from a kernelspec (argv: BINARY kernel -f CONNFILE),
// serving the fake engine. It lets Jupyter's own tools drive the kernel
// end to end without a separate program.
const childEnv = "MASSLINE_KERNEL_TEST_CHILD"

func TestMain(m *testing.M) {
	if os.Getenv(childEnv) != "" {
		os.Exit(runChildKernel(os.Args[1:]))
	}
	os.Exit(m.Run())
}

func runChildKernel(args []string) int {
	var path string
	for i, a := range args {
		if a == "-f" && i+1 < len(args) {
			path = args[i+1]
		}
	}
	conn, err := LoadConnection(path)
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		return 2
	}
	k, err := New(conn, newFakeEngine(), nil)
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		return 2
	}
	sig := make(chan os.Signal, 1)
	signal.Notify(sig, os.Interrupt)
	go func() {
		for range sig {
			k.Interrupt()
		}
	}()
	if err := k.Run(context.Background()); err != nil {
		fmt.Fprintln(os.Stderr, err)
		return 1
	}
	return 0
}

const python = "/usr/bin/python3"

// requirePython skips (or, under CI, fails) when /usr/bin/python3 cannot
// import the given modules.
func requirePython(t *testing.T, modules ...string) {
	t.Helper()
	var why string
	if _, err := os.Stat(python); err != nil {
		why = python + " not found"
	} else {
		imp := "import " + strings.Join(modules, ", ")
		if out, err := exec.Command(python, "-c", imp).CombinedOutput(); err != nil {
			why = fmt.Sprintf("%s cannot %q: %s", python, imp, strings.TrimSpace(string(out)))
		}
	}
	if why == "" {
		return
	}
	if os.Getenv("CI") != "" {
		t.Fatalf("CI is set and the Jupyter tools are missing: %s", why)
	}
	t.Skip(why)
}

func runPython(t *testing.T, script string, env []string, args ...string) []byte {
	t.Helper()
	path := filepath.Join(t.TempDir(), "script.py")
	if err := os.WriteFile(path, []byte(script), 0o644); err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
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

const clientScript = `
import json, sys
from jupyter_client import BlockingKernelClient

kc = BlockingKernelClient()
kc.load_connection_file(sys.argv[1])
kc.start_channels()
kc.wait_for_ready(timeout=20)
out = {}
out["info"] = kc.kernel_info(reply=True, timeout=10)["content"]
outputs = []
r = kc.execute_interactive("print hello from go\nshow picture\nvalue 6", output_hook=outputs.append, timeout=10)
out["exec_reply"] = r["content"]
out["outputs"] = [{"type": m["msg_type"], "content": m["content"]} for m in outputs]
r = kc.execute_interactive("fail", output_hook=lambda m: None, timeout=10)
out["error_reply"] = r["content"]
out["complete"] = kc.complete("body b: sp", cursor_pos=10, reply=True, timeout=10)["content"]
out["inspect"] = kc.inspect("sphere", cursor_pos=3, reply=True, timeout=10)["content"]
mid = kc.is_complete("stage soak:")
out["is_complete"] = kc._recv_reply(mid, timeout=10)["content"]

# Interrupt a running cell on the control channel.
eid = kc.execute("block")
import time; time.sleep(0.2)
imsg = kc.session.msg("interrupt_request", {})
kc.control_channel.send(imsg)
out["interrupt_reply"] = kc._recv_reply(imsg["header"]["msg_id"], timeout=10, channel="control")["content"]
out["interrupted"] = kc._recv_reply(eid, timeout=10)["content"]

out["shutdown"] = kc.shutdown(reply=True, timeout=10)["content"]
kc.stop_channels()
print(json.dumps(out))
`

func TestJupyterClientInterop(t *testing.T) {
	requirePython(t, "jupyter_client")
	h := startKernel(t, nil)
	conn := h.k.Connection()
	conn.KernelName = "massline"
	path := filepath.Join(t.TempDir(), "kernel-test.json")
	if err := conn.WriteFile(path); err != nil {
		t.Fatal(err)
	}
	var out struct {
		Info      map[string]any `json:"info"`
		ExecReply map[string]any `json:"exec_reply"`
		Outputs   []struct {
			Type    string         `json:"type"`
			Content map[string]any `json:"content"`
		} `json:"outputs"`
		ErrorReply     map[string]any `json:"error_reply"`
		Complete       map[string]any `json:"complete"`
		Inspect        map[string]any `json:"inspect"`
		IsComplete     map[string]any `json:"is_complete"`
		InterruptReply map[string]any `json:"interrupt_reply"`
		Interrupted    map[string]any `json:"interrupted"`
		Shutdown       map[string]any `json:"shutdown"`
	}
	raw := runPython(t, clientScript, nil, path)
	if err := json.Unmarshal(raw, &out); err != nil {
		t.Fatalf("%v: %s", err, raw)
	}
	if out.Info["protocol_version"] != "5.3" || out.Info["implementation"] != "massline" {
		t.Errorf("kernel_info = %v", out.Info)
	}
	if out.ExecReply["status"] != "ok" {
		t.Errorf("execute_reply = %v", out.ExecReply)
	}
	var kinds []string
	for _, o := range out.Outputs {
		kinds = append(kinds, o.Type)
	}
	if strings.Join(kinds, ",") != "status,execute_input,stream,display_data,execute_result,status" {
		t.Errorf("outputs seen by jupyter_client: %v", kinds)
	}
	if out.ErrorReply["status"] != "error" || out.ErrorReply["ename"] != "CheckError" {
		t.Errorf("error reply = %v", out.ErrorReply)
	}
	if m, _ := out.Complete["matches"].([]any); len(m) != 2 {
		t.Errorf("complete = %v", out.Complete)
	}
	if out.Inspect["found"] != true {
		t.Errorf("inspect = %v", out.Inspect)
	}
	if out.IsComplete["status"] != "incomplete" || out.IsComplete["indent"] != "    " {
		t.Errorf("is_complete = %v", out.IsComplete)
	}
	if out.InterruptReply["status"] != "ok" || out.Interrupted["ename"] != "Interrupted" {
		t.Errorf("interrupt: reply %v, cell %v", out.InterruptReply, out.Interrupted)
	}
	if out.Shutdown["status"] != "ok" || out.Shutdown["restart"] != false {
		t.Errorf("shutdown = %v", out.Shutdown)
	}
	if err := h.waitRun(t, 3*time.Second); err != nil {
		t.Errorf("Run after Jupyter's shutdown: %v", err)
	}
}

// kernelTestScript runs the Jupyter project's kernel test suite
// (jupyter_kernel_test), which validates every message against the
// message specification, on a kernel Jupyter launches from our kernelspec.
const kernelTestScript = `
import sys, unittest
import jupyter_kernel_test as jkt

class MasslineKernelTests(jkt.KernelTests):
    kernel_name = "massline-test"
    language_name = "massline"
    file_extension = ".mass"
    code_hello_world = "print hello, world"
    code_stderr = "warn oops"
    completion_samples = [{"text": "sp", "matches": {"species", "sphere"}}]
    complete_code_samples = ["value 1"]
    incomplete_code_samples = ["stage soak:"]
    invalid_code_samples = ["f())"]
    code_generate_error = "fail"
    code_execute_result = [{"code": "value 42", "result": "42"}]
    code_display_data = [{"code": "show picture", "mime": "text/html"}]
    code_inspect_sample = "sphere"

suite = unittest.TestLoader().loadTestsFromTestCase(MasslineKernelTests)
result = unittest.TextTestRunner(verbosity=2, stream=sys.stdout).run(suite)
print("RAN", result.testsRun, "SKIPPED", len(result.skipped))
sys.exit(0 if result.wasSuccessful() else 1)
`

func TestJupyterKernelTestSuite(t *testing.T) {
	requirePython(t, "jupyter_client", "jupyter_kernel_test")
	bin, err := os.Executable()
	if err != nil {
		t.Fatal(err)
	}
	data := t.TempDir()
	spec := Spec(bin)
	spec.Env = map[string]string{childEnv: "1"}
	if err := writeSpec(filepath.Join(data, "kernels", "massline-test"), spec); err != nil {
		t.Fatal(err)
	}
	out := runPython(t, kernelTestScript, []string{"JUPYTER_PATH=" + data, "JUPYTER_DATA_DIR=" + data, "JUPYTER_RUNTIME_DIR=" + t.TempDir()})
	t.Logf("jupyter_kernel_test:\n%s", out)
	if !strings.Contains(string(out), "RAN ") {
		t.Error("suite did not report")
	}
}
