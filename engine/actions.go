package engine

import (
	"context"
	"fmt"
	"math"
	"strings"

	"github.com/massline/massline/compile"
	"github.com/massline/massline/report"
)

// Output is one rendered output of a run, in the order the model asked.
type Output struct {
	// Kind is "table", "plot", "map" or "text".
	Kind  string
	Table *report.Table
	Plot  *report.Plot
	Map   *report.Map
	Text  string
	// Value and Unit hold a shown value in SI ("value" outputs).
	Value float64
	Unit  string
}

// runActions evaluates show, expect, print and value statements.
func runActions(ctx context.Context, m *compile.Model, sols map[string]*bodySolution, res *Result, opts *Options) error {
	for _, a := range m.Actions {
		if err := ctx.Err(); err != nil {
			return interruptErr(err)
		}
		switch a := a.(type) {
		case *compile.Print:
			// Parts are joined by a space, unless the text before already
			// ends in one.
			var b strings.Builder
			for i, p := range a.Parts {
				text := p.Text
				if p.Value != nil {
					v, _ := p.Value.IsConst()
					text = formatQuantity(v, p.Dim, p.Unit)
				}
				if i > 0 && b.Len() > 0 && !strings.HasSuffix(b.String(), " ") && !strings.HasPrefix(text, " ") {
					b.WriteByte(' ')
				}
				b.WriteString(text)
			}
			res.Outputs = append(res.Outputs, Output{Kind: "text", Text: b.String() + "\n"})
		case *compile.Eval:
			res.Outputs = append(res.Outputs, Output{Kind: "value", Text: formatQuantity(a.Value, a.Dim, a.Unit), Value: a.Value, Unit: unitOf(a.Dim)})
		case *compile.Show:
			res.Outputs = append(res.Outputs, show(m, a, sols, res)...)
		case *compile.Expect:
			c := expect(m, a, sols)
			res.Checks = append(res.Checks, c)
		case *compile.Sweep:
			if err := runSweep(ctx, m, a, opts, res); err != nil {
				return err
			}
		case *compile.Fit:
			if err := runFit(ctx, m, a, opts, res); err != nil {
				return err
			}
		}
	}
	if len(res.Checks) > 0 {
		res.Outputs = append(res.Outputs, Output{Kind: "table", Table: checksTable(res.Checks)})
	}
	return nil
}

// formatQuantity writes an SI value, in the unit the user wrote when known.
func formatQuantity(v float64, d interface{ String() string }, unit string) string {
	if unit != "" {
		if u, ok := parseUnit(unit); ok && u.Dim.String() == d.String() {
			return fmt.Sprintf("%s [%s]", report.FormatNumber(u.FromSI(v), 6), unit)
		}
	}
	s := d.String()
	if s == "1" {
		return report.FormatNumber(v, 6)
	}
	return fmt.Sprintf("%s [%s]", report.FormatNumber(v, 6), s)
}

func expect(m *compile.Model, e *compile.Expect, sols map[string]*bodySolution) Check {
	got := scalarResult(m, e.Subject, e.At, sols)
	c := Check{Where: e.Def, Text: e.Text, Got: got, Want: e.Value, Tol: e.Tol, Relative: e.Relative, Unit: unitOf(e.Subject.Dim),
		ShownUnit: e.Unit, ShownScale: e.Scale}
	diff := math.Abs(got - e.Value)
	if e.Relative {
		c.Passed = diff <= e.Tol*math.Abs(e.Value)
	} else {
		c.Passed = diff <= e.Tol
	}
	if math.IsNaN(got) {
		c.Passed = false
	}
	return c
}

// scalarResult evaluates a result to one number (at time at for a time
// series).
func scalarResult(m *compile.Model, r *compile.Result, at float64, sols map[string]*bodySolution) float64 {
	s := sols[r.Body]
	if s == nil {
		return math.NaN()
	}
	switch r.Kind {
	case "time_to":
		return s.timeTo(r.Species, r.Fraction, "uptake")
	case "effectiveness":
		return s.effectiveness(m, r.Species)
	}
	if m.Run.Steady {
		return s.value(r.Kind, r.Species, 0)
	}
	return s.value(r.Kind, r.Species, s.at(at))
}

// checksTable lists the expectations: one row each, in the unit the
// expected value was written in.
func checksTable(cs []Check) *report.Table {
	t := &report.Table{Title: "Checks (expect statements)", Columns: []report.Column{{Name: "check"}, {Name: "computed"}, {Name: "expected"}, {Name: "passed (1 = yes)"}}}
	for i, c := range cs {
		pass := 0.0
		if c.Passed {
			pass = 1
		}
		scale, unit := 1.0, c.Unit
		if c.ShownUnit != "" && c.ShownScale > 0 {
			scale, unit = c.ShownScale, c.ShownUnit
		}
		t.Rows = append(t.Rows, []float64{float64(i + 1), c.Got / scale, c.Want / scale, pass})
		status := "FAILED"
		if c.Passed {
			status = "passed"
		}
		tol := report.FormatNumber(c.Tol/scale, 3)
		if c.Relative {
			tol = report.FormatNumber(c.Tol*100, 3) + " %"
		} else if unit != "" && unit != "1" {
			tol += " " + unit
		}
		got := report.FormatNumber(c.Got/scale, 6)
		if unit != "" && unit != "1" {
			got += " " + unit
		}
		t.Notes = append(t.Notes, fmt.Sprintf("%d. %s — %s (computed %s, tolerance %s)", i+1, c.Text, status, got, tol))
	}
	return t
}
