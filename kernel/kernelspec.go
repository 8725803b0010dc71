package kernel

import (
	"encoding/json"
	"errors"
	"fmt"
	"image"
	"image/color"
	"image/png"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"runtime"
	"sort"
)

// KernelSpec is the content of a kernel.json file.
type KernelSpec struct {
	Argv          []string          `json:"argv"`
	DisplayName   string            `json:"display_name"`
	Language      string            `json:"language"`
	InterruptMode string            `json:"interrupt_mode,omitempty"`
	Env           map[string]string `json:"env,omitempty"`
	Metadata      map[string]any    `json:"metadata"`
}

// DefaultKernelName is the directory name the kernelspec is installed under.
const DefaultKernelName = "massline"

// Spec returns the kernelspec that starts argv0 as a kernel:
// argv0 kernel -f {connection_file}.
func Spec(argv0 string) KernelSpec {
	return KernelSpec{
		Argv:          []string{argv0, "kernel", "-f", "{connection_file}"},
		DisplayName:   "massline",
		Language:      "massline",
		InterruptMode: "message",
		Metadata:      map[string]any{},
	}
}

// WriteKernelSpec writes kernel.json (see Spec), logo-32x32.png and
// logo-64x64.png into dir, creating dir if needed.
func WriteKernelSpec(dir string, argv0 string) error {
	return writeSpec(dir, Spec(argv0))
}

func writeSpec(dir string, spec KernelSpec) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("kernel: creating kernelspec directory: %w", err)
	}
	data, err := json.MarshalIndent(spec, "", "  ")
	if err != nil {
		return err
	}
	if err := os.WriteFile(filepath.Join(dir, "kernel.json"), append(data, '\n'), 0o644); err != nil {
		return fmt.Errorf("kernel: writing kernel.json: %w", err)
	}
	for _, size := range []int{32, 64} {
		name := fmt.Sprintf("logo-%dx%d.png", size, size)
		f, err := os.Create(filepath.Join(dir, name))
		if err != nil {
			return fmt.Errorf("kernel: writing %s: %w", name, err)
		}
		err = png.Encode(f, Logo(size))
		if cerr := f.Close(); err == nil {
			err = cerr
		}
		if err != nil {
			return fmt.Errorf("kernel: writing %s: %w", name, err)
		}
	}
	return nil
}

// Logo draws the kernel's logo at size×size pixels: a porous bead in cross
// section, its rim dark where the solute has soaked in and its core pale,
// with concentric bands marking equal steps of concentration. Transparent
// outside the bead; the edge is anti-aliased.
func Logo(size int) *image.NRGBA {
	img := image.NewNRGBA(image.Rect(0, 0, size, size))
	const sub = 4 // supersampling per axis
	c := float64(size) / 2
	r := c * 0.92
	bands := 5.0
	for y := 0; y < size; y++ {
		for x := 0; x < size; x++ {
			var rs, gs, bs, as float64
			for sy := 0; sy < sub; sy++ {
				for sx := 0; sx < sub; sx++ {
					px := float64(x) + (float64(sx)+0.5)/sub - c
					py := float64(y) + (float64(sy)+0.5)/sub - c
					d := math.Hypot(px, py) / r
					if d > 1 {
						continue
					}
					// Concentration profile of uptake into a sphere: high at
					// the surface, falling toward the centre.
					u := math.Pow(d, 2.2)
					step := math.Floor(u*bands) / bands
					t := 0.65*step + 0.35*u
					// Light highlight up and to the left, for a 3-D look.
					hx, hy := px/r+0.35, py/r+0.35
					hl := math.Max(0, 1-math.Hypot(hx, hy)/0.6) * 0.25
					rr := lerp(236, 18, t) + 255*hl
					gg := lerp(246, 104, t) + 255*hl
					bb := lerp(240, 120, t) + 255*hl
					rs += math.Min(rr, 255)
					gs += math.Min(gg, 255)
					bs += math.Min(bb, 255)
					as++
				}
			}
			if as == 0 {
				continue
			}
			img.SetNRGBA(x, y, color.NRGBA{
				R: uint8(rs/as + 0.5), G: uint8(gs/as + 0.5), B: uint8(bs/as + 0.5),
				A: uint8(255*as/(sub*sub) + 0.5),
			})
		}
	}
	return img
}

func lerp(a, b, t float64) float64 { return a + (b-a)*t }

// InstallOptions chooses where InstallKernelSpec writes the kernelspec.
// At most one of User, Prefix and SysPrefix may be set; with none, the
// kernelspec goes to the system-wide directory.
type InstallOptions struct {
	// User installs for the current user: $JUPYTER_DATA_DIR/kernels, else
	// the per-user Jupyter data directory (Linux: $XDG_DATA_HOME/jupyter or
	// ~/.local/share/jupyter; macOS: ~/Library/Jupyter; Windows:
	// %APPDATA%\jupyter).
	User bool
	// Prefix installs under Prefix/share/jupyter/kernels.
	Prefix string
	// SysPrefix installs into the Python environment Jupyter runs from: the
	// parent of the directory holding the first `jupyter` on PATH, plus
	// share/jupyter/kernels (/usr/bin/jupyter gives /usr/share/jupyter/kernels);
	// /usr/local when no `jupyter` is on PATH.
	SysPrefix bool
	// Name is the kernelspec's directory name. Empty: DefaultKernelName.
	Name string
	// Argv0 is the program Jupyter starts. Empty: this executable.
	Argv0 string
}

var validName = regexp.MustCompile(`^[A-Za-z0-9._-]+$`)

// KernelsDir returns the kernels directory the options designate (the
// parent of the NAME directory).
func KernelsDir(opts InstallOptions) (string, error) {
	n := 0
	for _, set := range []bool{opts.User, opts.Prefix != "", opts.SysPrefix} {
		if set {
			n++
		}
	}
	if n > 1 {
		return "", errors.New("kernel: choose only one of user, prefix and sys-prefix")
	}
	switch {
	case opts.User:
		d, err := userDataDir()
		if err != nil {
			return "", err
		}
		return filepath.Join(d, "kernels"), nil
	case opts.Prefix != "":
		return filepath.Join(opts.Prefix, "share", "jupyter", "kernels"), nil
	case opts.SysPrefix:
		return filepath.Join(sysPrefix(), "share", "jupyter", "kernels"), nil
	}
	return filepath.Join(systemDataDirs()[0], "kernels"), nil
}

// userDataDir is Jupyter's per-user data directory.
func userDataDir() (string, error) {
	if d := os.Getenv("JUPYTER_DATA_DIR"); d != "" {
		return d, nil
	}
	switch runtime.GOOS {
	case "windows":
		if d := os.Getenv("APPDATA"); d != "" {
			return filepath.Join(d, "jupyter"), nil
		}
	case "darwin":
		home, err := os.UserHomeDir()
		if err != nil {
			return "", fmt.Errorf("kernel: no home directory: %w", err)
		}
		return filepath.Join(home, "Library", "Jupyter"), nil
	}
	if d := os.Getenv("XDG_DATA_HOME"); d != "" {
		return filepath.Join(d, "jupyter"), nil
	}
	home, err := os.UserHomeDir()
	if err != nil {
		return "", fmt.Errorf("kernel: no home directory: %w", err)
	}
	return filepath.Join(home, ".local", "share", "jupyter"), nil
}

// sysPrefix guesses Python's sys.prefix from the first jupyter on PATH.
func sysPrefix() string {
	if p, err := exec.LookPath("jupyter"); err == nil {
		if abs, err := filepath.Abs(p); err == nil {
			return filepath.Dir(filepath.Dir(abs))
		}
	}
	if runtime.GOOS == "windows" {
		return filepath.Join(os.Getenv("PROGRAMDATA"), "jupyter")
	}
	return "/usr/local"
}

// systemDataDirs are Jupyter's system-wide data directories, first the
// one installs go to.
func systemDataDirs() []string {
	if runtime.GOOS == "windows" {
		return []string{filepath.Join(os.Getenv("PROGRAMDATA"), "jupyter")}
	}
	return []string{"/usr/local/share/jupyter", "/usr/share/jupyter"}
}

func kernelName(opts InstallOptions) (string, error) {
	name := opts.Name
	if name == "" {
		name = DefaultKernelName
	}
	if !validName.MatchString(name) || name == "." || name == ".." {
		return "", fmt.Errorf("kernel: invalid kernel name %q (letters, digits, '.', '_' and '-' only)", name)
	}
	return name, nil
}

// InstallKernelSpec writes the kernelspec where opts says and returns the
// directory written (…/kernels/NAME). An existing kernelspec of the same
// name is replaced.
func InstallKernelSpec(opts InstallOptions) (path string, err error) {
	name, err := kernelName(opts)
	if err != nil {
		return "", err
	}
	dir, err := KernelsDir(opts)
	if err != nil {
		return "", err
	}
	argv0 := opts.Argv0
	if argv0 == "" {
		if argv0, err = os.Executable(); err != nil {
			return "", fmt.Errorf("kernel: cannot find this executable: %w", err)
		}
	}
	path = filepath.Join(dir, name)
	if err := WriteKernelSpec(path, argv0); err != nil {
		return "", err
	}
	return path, nil
}

// RemoveKernelSpec deletes the kernelspec directory opts designates and
// returns its path. It refuses a directory without a kernel.json.
func RemoveKernelSpec(opts InstallOptions) (path string, err error) {
	name, err := kernelName(opts)
	if err != nil {
		return "", err
	}
	dir, err := KernelsDir(opts)
	if err != nil {
		return "", err
	}
	path = filepath.Join(dir, name)
	if _, err := os.Stat(filepath.Join(path, "kernel.json")); err != nil {
		return "", fmt.Errorf("kernel: no kernelspec at %s: %w", path, err)
	}
	if err := os.RemoveAll(path); err != nil {
		return "", fmt.Errorf("kernel: removing %s: %w", path, err)
	}
	return path, nil
}

// InstalledSpec is one kernelspec found by ListKernelSpecs.
type InstalledSpec struct {
	Name string     // directory name
	Dir  string     // the directory holding kernel.json
	Spec KernelSpec // its parsed content
}

// SearchPath returns the Jupyter data directories searched for
// kernelspecs, highest priority first: $JUPYTER_PATH entries, the user
// directory, the sys-prefix directory, the system directories.
func SearchPath() []string {
	var dirs []string
	if p := os.Getenv("JUPYTER_PATH"); p != "" {
		dirs = append(dirs, filepath.SplitList(p)...)
	}
	if d, err := userDataDir(); err == nil {
		dirs = append(dirs, d)
	}
	dirs = append(dirs, filepath.Join(sysPrefix(), "share", "jupyter"))
	dirs = append(dirs, systemDataDirs()...)
	seen := map[string]bool{}
	out := dirs[:0]
	for _, d := range dirs {
		if d != "" && !seen[d] {
			seen[d] = true
			out = append(out, d)
		}
	}
	return out
}

// ListKernelSpecs lists the kernelspecs Jupyter would see (any language,
// not only massline), sorted by name. When a name appears in several data
// directories, the one earliest in SearchPath wins, as in Jupyter.
// Unreadable kernel.json files are skipped.
func ListKernelSpecs() ([]InstalledSpec, error) {
	found := map[string]InstalledSpec{}
	for _, d := range SearchPath() {
		entries, err := os.ReadDir(filepath.Join(d, "kernels"))
		if err != nil {
			continue // missing or unreadable: Jupyter skips it too
		}
		for _, e := range entries {
			if !e.IsDir() || found[e.Name()].Dir != "" {
				continue
			}
			dir := filepath.Join(d, "kernels", e.Name())
			data, err := os.ReadFile(filepath.Join(dir, "kernel.json"))
			if err != nil {
				continue
			}
			var s KernelSpec
			if json.Unmarshal(data, &s) != nil {
				continue
			}
			found[e.Name()] = InstalledSpec{Name: e.Name(), Dir: dir, Spec: s}
		}
	}
	out := make([]InstalledSpec, 0, len(found))
	for _, s := range found {
		out = append(out, s)
	}
	sort.Slice(out, func(i, j int) bool { return out[i].Name < out[j].Name })
	return out, nil
}
