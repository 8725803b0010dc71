package kernel

import (
	"encoding/json"
	"image/png"
	"os"
	"path/filepath"
	"strconv"
	"testing"
)

func TestWriteKernelSpec(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "kernels", "massline")
	if err := WriteKernelSpec(dir, "/opt/bin/massline"); err != nil {
		t.Fatal(err)
	}
	data, err := os.ReadFile(filepath.Join(dir, "kernel.json"))
	if err != nil {
		t.Fatal(err)
	}
	var spec map[string]any
	if err := json.Unmarshal(data, &spec); err != nil {
		t.Fatal(err)
	}
	argv, _ := spec["argv"].([]any)
	want := []string{"/opt/bin/massline", "kernel", "-f", "{connection_file}"}
	if len(argv) != len(want) {
		t.Fatalf("argv = %v", argv)
	}
	for i := range want {
		if argv[i] != want[i] {
			t.Errorf("argv[%d] = %v, want %s", i, argv[i], want[i])
		}
	}
	for key, w := range map[string]string{"display_name": "massline", "language": "massline", "interrupt_mode": "message"} {
		if spec[key] != w {
			t.Errorf("%s = %v, want %s", key, spec[key], w)
		}
	}
	if md, ok := spec["metadata"].(map[string]any); !ok || len(md) != 0 {
		t.Errorf("metadata = %v, want {}", spec["metadata"])
	}
	for _, size := range []int{32, 64} {
		f, err := os.Open(filepath.Join(dir, "logo-"+strconv.Itoa(size)+"x"+strconv.Itoa(size)+".png"))
		if err != nil {
			t.Fatal(err)
		}
		img, err := png.Decode(f)
		f.Close()
		if err != nil {
			t.Fatal(err)
		}
		b := img.Bounds()
		if b.Dx() != size || b.Dy() != size {
			t.Errorf("logo %d is %v", size, b)
		}
		if _, _, _, a := img.At(0, 0).RGBA(); a != 0 {
			t.Errorf("logo %d: corner not transparent", size)
		}
		_, _, _, ac := img.At(size/2, size/2).RGBA()
		rc, _, _, _ := img.At(size/2, size/2).RGBA()
		re, _, _, _ := img.At(size/2+int(float64(size)*0.42), size/2).RGBA()
		if ac != 0xffff {
			t.Errorf("logo %d: centre not opaque", size)
		}
		// Concentric shading: the rim is darker than the core.
		if re >= rc {
			t.Errorf("logo %d: rim red %d not darker than core %d", size, re, rc)
		}
	}
}

func TestInstallListRemove(t *testing.T) {
	root := t.TempDir()
	user := filepath.Join(root, "userdata")
	t.Setenv("JUPYTER_DATA_DIR", user)
	t.Setenv("JUPYTER_PATH", filepath.Join(root, "extra"))

	p, err := InstallKernelSpec(InstallOptions{User: true, Argv0: "/bin/massline"})
	if err != nil {
		t.Fatal(err)
	}
	if want := filepath.Join(user, "kernels", "massline"); p != want {
		t.Errorf("user install at %s, want %s", p, want)
	}
	p, err = InstallKernelSpec(InstallOptions{Prefix: filepath.Join(root, "env"), Name: "massline-dev", Argv0: "/bin/m2"})
	if err != nil {
		t.Fatal(err)
	}
	if want := filepath.Join(root, "env", "share", "jupyter", "kernels", "massline-dev"); p != want {
		t.Errorf("prefix install at %s, want %s", p, want)
	}
	// A spec of the same name earlier on the path wins.
	if err := WriteKernelSpec(filepath.Join(root, "extra", "kernels", "massline"), "/first/massline"); err != nil {
		t.Fatal(err)
	}
	specs, err := ListKernelSpecs()
	if err != nil {
		t.Fatal(err)
	}
	var found *InstalledSpec
	for i := range specs {
		if specs[i].Name == "massline" {
			found = &specs[i]
		}
		if specs[i].Name == "massline-dev" {
			t.Error("a --prefix install outside the search path was listed")
		}
	}
	if found == nil || found.Spec.Argv[0] != "/first/massline" || found.Spec.InterruptMode != "message" {
		t.Errorf("ListKernelSpecs massline = %+v", found)
	}

	if _, err := InstallKernelSpec(InstallOptions{User: true, Name: "../evil"}); err == nil {
		t.Error("path-like name accepted")
	}
	if _, err := InstallKernelSpec(InstallOptions{User: true, Prefix: "/x"}); err == nil {
		t.Error("two locations accepted")
	}
	if d, err := KernelsDir(InstallOptions{}); err != nil || d != filepath.Join(systemDataDirs()[0], "kernels") {
		t.Errorf("default kernels dir %s, %v", d, err)
	}
	if d, err := KernelsDir(InstallOptions{SysPrefix: true}); err != nil || filepath.Base(filepath.Dir(d)) != "jupyter" {
		t.Errorf("sys-prefix kernels dir %s, %v", d, err)
	}

	// Remove refuses a directory that is not a kernelspec.
	if err := os.MkdirAll(filepath.Join(user, "kernels", "notaspec"), 0o755); err != nil {
		t.Fatal(err)
	}
	if _, err := RemoveKernelSpec(InstallOptions{User: true, Name: "notaspec"}); err == nil {
		t.Error("removed a directory without kernel.json")
	}
	p, err = RemoveKernelSpec(InstallOptions{User: true})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(p); !os.IsNotExist(err) {
		t.Errorf("%s still exists", p)
	}
}
