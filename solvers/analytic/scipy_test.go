package analytic

import (
	"encoding/json"
	"math"
	"os"
	"os/exec"
	"strings"
	"testing"
)

// scipyFilm computes the film uptake series independently, in Debian's
// python3-scipy (scipy.optimize.brentq for the eigenvalues, scipy.special
// for J0 and J1), with the coefficients of the Mt/M∞ series:
//
//	slab:     2L²/(β²(β² + L² + L)),   β tan β = L
//	cylinder: 4L²/(β²(β² + L²)),       β J1(β) = L J0(β)
//	sphere:   6L²/(β²(β² + L(L − 1))), β cot β = 1 − L
//
// source: J. Crank, The Mathematics of Diffusion, 2nd ed. (1975), eqs.
// 4.54, 5.51 and 6.40 (surface evaporation / film condition; equation
// numbers from memory).
const scipyFilm = `
import json, math, sys
from scipy.optimize import brentq
from scipy.special import j0, j1, jn_zeros

def roots(shape, L, n):
    out = []
    if shape == "slab":
        f = lambda b: b * math.sin(b) - L * math.cos(b)
        for k in range(n):
            out.append(brentq(f, k * math.pi + 1e-12, (k + 0.5) * math.pi - 1e-12, xtol=1e-15))
    elif shape == "sphere":
        f = lambda b: b * math.cos(b) - (1 - L) * math.sin(b)
        for k in range(n):
            out.append(brentq(f, k * math.pi + 1e-12, (k + 1) * math.pi - 1e-12, xtol=1e-15))
    else:
        z0 = jn_zeros(0, n)
        z1 = [0.0] + list(jn_zeros(1, n))
        f = lambda b: b * j1(b) - L * j0(b)
        for k in range(n):
            out.append(brentq(f, z1[k] + 1e-12, z0[k] - 1e-12, xtol=1e-15))
    return out

def uptake(shape, L, tau):
    s = 0.0
    for b in roots(shape, L, 400):
        if shape == "slab":
            c = 2 * L * L / (b * b * (b * b + L * L + L))
        elif shape == "cylinder":
            c = 4 * L * L / (b * b * (b * b + L * L))
        else:
            c = 6 * L * L / (b * b * (b * b + L * (L - 1)))
        s += c * math.exp(-b * b * tau)
    return 1 - s

out = []
for shape in ("slab", "cylinder", "sphere"):
    for L in (0.1, 1.0, 10.0, 100.0):
        for tau in (0.05, 0.2, 1.0):
            out.append([shape, L, tau, uptake(shape, L, tau)])
print(json.dumps(out))
`

// TestFilmAgainstScipy compares Film.Uptake with the independent scipy
// evaluation above. Tests needing Python skip only when it is missing and
// CI is unset.
func TestFilmAgainstScipy(t *testing.T) {
	const python = "/usr/bin/python3"
	if out, err := exec.Command(python, "-c", "import scipy").CombinedOutput(); err != nil {
		if os.Getenv("CI") != "" {
			t.Fatalf("CI is set and python3-scipy is missing: %s", strings.TrimSpace(string(out)))
		}
		t.Skip("python3-scipy missing")
	}
	out, err := exec.Command(python, "-c", scipyFilm).Output()
	if err != nil {
		t.Fatalf("python: %v", err)
	}
	var rows [][]any
	if err := json.Unmarshal(out, &rows); err != nil {
		t.Fatal(err)
	}
	shapes := map[string]Shape{"slab": Slab, "cylinder": Cylinder, "sphere": Sphere}
	for _, r := range rows {
		shape, L, tau, want := shapes[r[0].(string)], r[1].(float64), r[2].(float64), r[3].(float64)
		f, err := NewFilm(shape, L)
		if err != nil {
			t.Fatal(err)
		}
		got, err := f.Uptake(tau)
		if err != nil {
			t.Fatal(err)
		}
		if d := math.Abs(got - want); d > 1e-10 {
			t.Errorf("%v Bi=%g τ=%g: %.12f here, %.12f with scipy (diff %.1e)", shape, L, tau, got, want, d)
		}
	}
	t.Logf("%d values agree", len(rows))
}
