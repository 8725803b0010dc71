package engine

import (
	"encoding/json"
	"fmt"
	"html"
	"math"
	"strings"

	"github.com/massline/massline/report"
)

// JSON returns the result as indented JSON (layout documented in the
// README). Values that are not finite are written as null.
func (r *Result) JSON() ([]byte, error) {
	return json.MarshalIndent(sanitize(r), "", "  ")
}

// sanitize replaces NaN and ±Inf, which JSON cannot carry, by null.
func sanitize(r *Result) any { return replaceNonFinite(r) }

func replaceNonFinite(r *Result) map[string]any {
	fix := func(v []float64) []any {
		out := make([]any, len(v))
		for i, x := range v {
			if math.IsNaN(x) || math.IsInf(x, 0) {
				out[i] = nil
			} else {
				out[i] = x
			}
		}
		return out
	}
	num := func(x float64) any {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return nil
		}
		return x
	}
	var series []map[string]any
	for _, s := range r.Series {
		series = append(series, map[string]any{"name": s.Name, "body": s.Body, "species": s.Species, "unit": s.Unit, "values": fix(s.Values)})
	}
	var profiles []map[string]any
	for _, p := range r.Profiles {
		vals := map[string]any{}
		for k, v := range p.Values {
			vals[k] = fix(v)
		}
		profiles = append(profiles, map[string]any{"time_s": num(p.Time), "body": p.Body, "position_m": fix(p.Position), "values": vals})
	}
	var checks []map[string]any
	for _, c := range r.Checks {
		checks = append(checks, map[string]any{"text": c.Text, "got": num(c.Got), "want": c.Want, "tolerance": c.Tol, "relative": c.Relative, "unit": c.Unit, "passed": c.Passed})
	}
	var scalars []map[string]any
	for _, s := range r.Scalars {
		sc := map[string]any{"name": s.Name, "body": s.Body, "species": s.Species, "unit": s.Unit, "value": num(s.Value)}
		if s.Fraction != 0 {
			sc["fraction"] = s.Fraction
		}
		scalars = append(scalars, sc)
	}
	var ledger []map[string]any
	for _, l := range r.Ledger {
		ledger = append(ledger, map[string]any{"body": l.Body, "species": l.Species, "unit": l.Unit, "initial": num(l.Initial),
			"inflow": num(l.Inflow), "consumed": num(l.Consumed), "final": num(l.Final), "closure": num(l.Closure)})
	}
	out := map[string]any{"model": r.Model, "times_s": fix(r.Times), "series": series, "profiles": profiles,
		"solver": r.Solver, "ledger": ledger, "caution": r.Caution}
	if len(r.Notes) > 0 {
		out["notes"] = r.Notes
	}
	if len(r.Estimates) > 0 {
		var est []map[string]any
		for _, e := range r.Estimates {
			est = append(est, map[string]any{"case": e.Case, "body": e.Body, "species": e.Species, "series": e.Series, "unit": e.Unit,
				"spatial": num(e.Spatial), "temporal": num(e.Temporal), "extrapolated": e.Extrapolated})
		}
		out["error_estimates"] = est
	}
	if len(r.Sweeps) > 0 {
		var sw []map[string]any
		for _, g := range r.Sweeps {
			var rows [][]any
			for _, row := range g.Rows {
				rows = append(rows, fix(row))
			}
			sw = append(sw, map[string]any{"title": g.Title, "columns": g.Columns, "rows": rows})
		}
		out["sweeps"] = sw
	}
	if checks != nil {
		out["checks"] = checks
	}
	if scalars != nil {
		out["scalars"] = scalars
	}
	return out
}

// Footer is the line every report ends with: model hash, massline
// version, solver settings and the mass-ledger closure.
func (r *Result) Footer() string {
	worst := 0.0
	for _, l := range r.Ledger {
		worst = math.Max(worst, l.Closure)
	}
	hash := r.Model.SHA256
	if len(hash) > 12 {
		hash = hash[:12]
	}
	s := fmt.Sprintf("model sha256 %s · massline %s", hash, r.Model.Version)
	switch {
	case r.Solver.Method != "" && r.Solver.Steps == 0:
		s += fmt.Sprintf(" · steady state by Newton's method, %d cells", r.Solver.Cells)
	case r.Solver.Method != "":
		s += fmt.Sprintf(" · %s, rtol %g, %d cells, %d steps", r.Solver.Method, r.Solver.RTol, r.Solver.Cells, r.Solver.Steps)
	}
	if len(r.Ledger) > 0 {
		s += fmt.Sprintf(" · mass ledger closes to %.1e", worst)
	}
	return s
}

// String renders the result as plain text: every table, the printed
// lines, the checks, the footer and the caution.
func (r *Result) String() string {
	var b strings.Builder
	for _, o := range r.Outputs {
		switch o.Kind {
		case "table":
			b.WriteString(o.Table.Text())
			b.WriteByte('\n')
		case "text", "note":
			b.WriteString(o.Text)
		case "value":
			b.WriteString(o.Text + "\n")
		case "plot":
			fmt.Fprintf(&b, "[plot: %s]\n\n", o.Plot.Title)
		case "map":
			fmt.Fprintf(&b, "[map: %s]\n\n", o.Map.Title)
		}
	}
	if len(r.Ledger) > 0 || r.Solver.Method != "" {
		b.WriteString(r.Footer() + "\n")
		b.WriteString("Caution: " + r.Caution + "\n")
	}
	return b.String()
}

// HTML renders the result as an HTML fragment with tables and inline SVG
// plots, the footer and the caution.
func (r *Result) HTML() string {
	var b strings.Builder
	b.WriteString(`<div class="massline-result">`)
	for _, o := range r.Outputs {
		b.WriteString(o.HTML())
	}
	if len(r.Ledger) > 0 || r.Solver.Method != "" {
		fmt.Fprintf(&b, `<p style="font-size:smaller;opacity:0.75">%s<br>%s</p>`, html.EscapeString(r.Footer()), html.EscapeString("Caution: "+r.Caution))
	}
	b.WriteString(`</div>`)
	return b.String()
}

// SVG returns the first plot of the result, or "" when it has none.
func (r *Result) SVG() string {
	for _, o := range r.Outputs {
		if s := o.SVG(); s != "" {
			return s
		}
	}
	return ""
}

// Plots returns every plot and map as SVG text, in order.
func (r *Result) Plots() []string {
	var out []string
	for _, o := range r.Outputs {
		if s := o.SVG(); s != "" {
			out = append(out, s)
		}
	}
	return out
}

// HTML renders one output as an HTML fragment.
func (o Output) HTML() string {
	switch o.Kind {
	case "table":
		return o.Table.HTML()
	case "plot":
		return o.Plot.SVG()
	case "map":
		return o.Map.SVG()
	}
	return "<pre>" + html.EscapeString(o.Text) + "</pre>"
}

// SVG renders a plot or map; "" for other outputs.
func (o Output) SVG() string {
	switch o.Kind {
	case "plot":
		return o.Plot.SVG()
	case "map":
		return o.Map.SVG()
	}
	return ""
}

// String renders one output as plain text.
func (o Output) String() string {
	switch o.Kind {
	case "table":
		return o.Table.Text()
	case "plot":
		return o.Plot.Text()
	case "map":
		return "[map: " + o.Map.Title + "]"
	}
	return o.Text
}

var _ = report.Caution
