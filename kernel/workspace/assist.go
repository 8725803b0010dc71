package workspace

import (
	"fmt"
	"sort"
	"strings"
	"unicode"
	"unicode/utf8"

	"github.com/massline/massline/compile"
	"github.com/massline/massline/compile/units"
	"github.com/massline/massline/dsl"
	"github.com/massline/massline/kernel"
)

// help holds a paragraph and an example for each keyword and built-in
// word of the language, shown by inspection.
var help = map[string][2]string{
	"massline":  {"The language version line: the version of the language the file is written for.", "massline 1"},
	"use":       {"Includes a shared property set from another file (let and species statements only). A name defined twice is an error.", `use "gel_properties.mln"`},
	"let":       {"Names a quantity. Every number with a dimension carries its unit in brackets; quantities may be computed from others.", "let Bi = kf * R / Deff"},
	"species":   {"Declares a diffusing substance: diffusivity (required), molar_mass, porosity and tortuosity (then the effective diffusivity is diffusivity × porosity / tortuosity).", "species dye { diffusivity = 4e-10 [m^2/s] }"},
	"body":      {"Declares a particle: slab(half_thickness), cylinder(radius), sphere(radius), hollow_cylinder(inner, outer), hollow_sphere(inner, outer), short_cylinder(radius, length); optionally in layers.", "body bead = sphere(radius = 1.5 [mm])"},
	"layer":     {"One layer of a layered body, from the previous layer out to the given position.", "layer coat to 2 [mm]"},
	"balance":   {"States that a species diffuses in a body (accumulation = diffusion + source), with an optional source, store (amount held per volume) and diffusivity.", "balance dye in bead { source = -2e-3 [1/s] * dye }"},
	"boundary":  {"Sets the condition at a boundary (centre, surface, inner, outer; core|coat between layers): symmetry, sealed, fixed, film, flux, bath or contact.", "boundary bead.surface: fixed(0.8 [mol/m^3])"},
	"initially": {"Sets the starting concentration in a body or layer; it may depend on position r.", "initially bead: dye = 0 [mol/m^3]"},
	"stage":     {"A period of a staged run; boundary statements inside replace the conditions for that period.", "stage rinse for 30 [min] { boundary bead.surface: fixed(0 [mol/m^3]) }"},
	"run":       {"What to solve: a transient to an end time with output times, or a steady state.", "run until 4 [h] every 5 [min]"},
	"settings":  {"Solver settings: rtol, atol (a concentration), cells, cluster (widest/narrowest cell), method.", "settings { rtol = 1e-8, cells = 60 }"},
	"show":      {"Shows results as tables and plots: uptake, release, mean, centre, surface, flux, bath, content, profile, map, time_to, effectiveness, ledger.", "show uptake(dye), centre(dye) scale sqrt"},
	"expect":    {"An acceptance check carried by the file: a result must equal a value within a tolerance ([%] is relative).", "expect time_to(dye, 90 [%]) = 1.7 [h] within 5 [%]"},
	"sweep":     {"Repeats the results inside for each value of a quantity.", "sweep R in 1 [mm], 2 [mm] { show time_to(dye, 90 [%]) }"},
	"fit":       {"Adjusts quantities, within bounds, to measured data in a CSV file whose header carries units.", `fit Deff from 1e-11 [m^2/s] to 1e-8 [m^2/s] against "uptake.csv" { time = "t"  uptake(dye) = "F" }`},
	"print":     {"Writes a line of text (and values) to the output.", `print "Biot number: ", Bi`},
	"reset":     {"Clears the notebook workspace.", "reset"},
	"symmetry":  {"Boundary condition: zero flux at a centre or axis.", "boundary bead.centre: symmetry"},
	"sealed":    {"Boundary condition: nothing crosses this face.", "boundary sheet.surface: sealed"},
	"fixed":     {"Boundary condition: the concentration just inside the surface; may depend on time t.", "boundary bead.surface: fixed(0.8 [mol/m^3])"},
	"film":      {"Boundary condition: flux kf·(bulk − c_s/partition) through a liquid film.", "boundary bead.surface: film(coefficient = 1e-5 [m/s], bulk = 0.8 [mol/m^3])"},
	"flux":      {"Boundary condition: an imposed flux into the body (mol/(m^2·s)); as a result, the flux into the body through its surface.", "boundary sheet.surface: flux(1e-6 [mol/(m^2*s)])"},
	"bath":      {"Boundary condition: a well-stirred bath of limited volume shared by a number of particles; as a result, the bath concentration.", "boundary bead.surface: bath(volume = 500 [mL], particles = 2000, start = 0.8 [mol/m^3])"},
	"contact":   {"Condition between two layers: partition coefficient and optional contact resistance.", "boundary tablet.core|coat: contact(partition = 2)"},
	"t":         {"Time since the start of the run, in seconds.", "fixed(0.8 [mol/m^3] * exp(-t / 1 [h]))"},
	"r":         {"Distance from the centre (slab: from the mid-plane).", "initially bead: dye = 1 [mol/m^3] * (r / 1.5 [mm])^2"},
}

func init() {
	for k, v := range compile.ResultFuncs {
		if _, ok := help[k]; !ok {
			help[k] = [2]string{"Result: " + v + ".", "show " + k + "(dye)"}
		}
	}
}

// model checks the workspace's cells leniently to learn its names.
func (w *Workspace) model() *compile.Model {
	f, _ := dsl.Parse("cell", "")
	m, _ := compile.Check(f, &compile.Options{Previous: w.cells, Redefine: true, Lenient: true})
	return m
}

// wordAt finds the word (letters, digits, _, .) that ends at or contains
// byte offset off.
func wordAt(code string, off int) (start, end int) {
	isWord := func(r rune) bool { return r == '_' || r == '.' || unicode.IsLetter(r) || unicode.IsDigit(r) }
	start = off
	for start > 0 {
		r, size := utf8.DecodeLastRuneInString(code[:start])
		if !isWord(r) {
			break
		}
		start -= size
	}
	end = off
	for end < len(code) {
		r, size := utf8.DecodeRuneInString(code[end:])
		if !isWord(r) {
			break
		}
		end += size
	}
	return start, end
}

// byteOffset converts a code-point offset to a byte offset.
func byteOffset(s string, cp int) int {
	if cp <= 0 {
		return 0
	}
	n := 0
	for i := range s {
		if n == cp {
			return i
		}
		n++
	}
	return len(s)
}

func cpOffset(s string, b int) int { return utf8.RuneCountInString(s[:b]) }

// Complete proposes keywords, units (inside brackets), names of the
// workspace, result functions, shapes, conditions and a body's
// boundaries after "body.".
func (w *Workspace) Complete(code string, cursor int) kernel.Completion {
	w.mu.Lock()
	defer w.mu.Unlock()
	off := byteOffset(code, cursor)
	start, _ := wordAt(code, off)
	prefix := code[start:off]
	var cands []string
	inUnit := strings.LastIndex(code[:off], "[") > strings.LastIndex(code[:off], "]")
	if inUnit {
		// Units: the word after the last operator inside the bracket.
		s := off
		for s > 0 {
			r, size := utf8.DecodeLastRuneInString(code[:s])
			if strings.ContainsRune("[*/()^· ", r) {
				break
			}
			s -= size
		}
		start, prefix = s, code[s:off]
		cands = units.Names()
	} else if keys := contextKeys(code[:start]); keys != nil {
		// Inside film( … ), sphere( … ) or a species/balance/settings
		// block: the parameter names that fit there.
		cands = keys
	} else if dot := strings.LastIndexByte(prefix, '.'); dot >= 0 {
		m := w.model()
		bodyName := prefix[:dot]
		if m != nil {
			for _, b := range m.Bodies {
				if b.Name == bodyName {
					for _, n := range compile.Boundaries(b.Shape) {
						cands = append(cands, bodyName+"."+n)
					}
					for _, r := range b.Regions {
						if r.Layer != "" {
							cands = append(cands, bodyName+"."+r.Layer)
						}
					}
				}
			}
		}
	} else {
		cands = append(cands, dsl.Keywords()...)
		for k := range help {
			cands = append(cands, k)
		}
		for _, f := range []string{"exp", "log", "ln", "log10", "sqrt", "abs", "pow", "min", "max", "pi",
			"sphere", "slab", "cylinder", "hollow_sphere", "hollow_cylinder", "short_cylinder",
			"diffusivity", "molar_mass", "porosity", "tortuosity", "source", "store",
			"centre", "surface", "inner", "outer", "until", "every", "at", "steady", "within", "against"} {
			cands = append(cands, f)
		}
		if m := w.model(); m != nil {
			for _, q := range m.Quantities {
				cands = append(cands, q.Name)
			}
			for _, s := range m.Species {
				cands = append(cands, s.Name)
			}
			for _, b := range m.Bodies {
				cands = append(cands, b.Name)
			}
		}
	}
	seen := map[string]bool{}
	var matches []string
	for _, c := range cands {
		if strings.HasPrefix(c, prefix) && !seen[c] {
			seen[c] = true
			matches = append(matches, c)
		}
	}
	sort.Strings(matches)
	return kernel.Completion{Matches: matches, CursorStart: cpOffset(code, start), CursorEnd: cursor}
}

// Inspect describes the word at the cursor: a keyword's paragraph with an
// example, or a name's value with units and where it was defined.
func (w *Workspace) Inspect(code string, cursor, detail int) (kernel.Bundle, bool) {
	w.mu.Lock()
	defer w.mu.Unlock()
	off := byteOffset(code, cursor)
	start, end := wordAt(code, off)
	word := strings.Trim(code[start:end], ".")
	if word == "" {
		return nil, false
	}
	if m := w.model(); m != nil {
		for _, q := range m.Quantities {
			if q.Name == word {
				text := fmt.Sprintf("%s: quantity, %s", q.Name, q.Dim.Describe())
				if q.Const {
					text += fmt.Sprintf("\nvalue: %s", valueText(q))
				}
				text += "\ndefined at " + q.Def.String()
				return kernel.Bundle{"text/plain": text}, true
			}
		}
		for _, s := range m.Species {
			if s.Name == word {
				text := fmt.Sprintf("%s: species (its concentration in mol/m^3 in expressions)\ndefined at %s", s.Name, s.Def)
				if v, ok := s.Diffusivity.IsConst(); ok && s.Diffusivity != nil {
					text += fmt.Sprintf("\neffective diffusivity: %g m^2/s", v)
				}
				return kernel.Bundle{"text/plain": text}, true
			}
		}
		for _, b := range m.Bodies {
			if b.Name == word {
				text := fmt.Sprintf("%s: body, %s, outer %g m", b.Name, b.Shape, b.Outer)
				if b.Inner > 0 {
					text += fmt.Sprintf(", inner %g m", b.Inner)
				}
				text += "\nboundaries: " + strings.Join(compile.Boundaries(b.Shape), ", ") + "\ndefined at " + b.Def.String()
				return kernel.Bundle{"text/plain": text}, true
			}
		}
	}
	if h, ok := help[word]; ok {
		return kernel.Bundle{"text/plain": word + ": " + h[0] + "\n\nExample:\n    " + h[1]}, true
	}
	if u, ok := units.Lookup(word); ok {
		return kernel.Bundle{"text/plain": "unit " + u.Describe()}, true
	}
	return nil, false
}

func valueText(q *compile.Quantity) string {
	if q.Unit != "" {
		if u, err := units.Parse(q.Unit); err == nil {
			return fmt.Sprintf("%g [%s] = %g %s", u.FromSI(q.Value), q.Unit, q.Value, q.Dim)
		}
	}
	if q.Dim.IsZero() {
		return fmt.Sprintf("%g", q.Value)
	}
	return fmt.Sprintf("%g %s", q.Value, q.Dim)
}

// IsComplete reports whether a cell is ready to run: "incomplete" while a
// brace is open or the text ends in an operator or comma, "invalid" when
// it cannot parse, "complete" otherwise.
func (w *Workspace) IsComplete(code string) (string, string) {
	depth := 0
	inStr, inUnit := false, false
	for i := 0; i < len(code); i++ {
		c := code[i]
		switch {
		case inStr:
			if c == '\\' {
				i++
			} else if c == '"' {
				inStr = false
			}
		case inUnit:
			if c == ']' {
				inUnit = false
			}
		case c == '#':
			for i < len(code) && code[i] != '\n' {
				i++
			}
		case c == '"':
			inStr = true
		case c == '[':
			inUnit = true
		case c == '{' || c == '(':
			depth++
		case c == '}' || c == ')':
			depth--
		}
	}
	if depth < 0 {
		return "invalid", ""
	}
	if depth > 0 || inStr || inUnit {
		return "incomplete", strings.Repeat("  ", max(depth, 1))
	}
	trimmed := strings.TrimRight(stripComment(code), " \t\r\n")
	if trimmed != "" && strings.ContainsAny(trimmed[len(trimmed)-1:], "+-*/^=,(:|<>") {
		return "incomplete", "  "
	}
	if _, diags := dsl.Parse("cell", code); diags.HasErrors() {
		return "invalid", ""
	}
	return "complete", ""
}

// stripComment removes a trailing comment from the last line.
func stripComment(code string) string {
	nl := strings.LastIndexByte(code, '\n')
	last := code[nl+1:]
	if i := strings.IndexByte(last, '#'); i >= 0 && !strings.Contains(last[:i], "\"") {
		return code[:nl+1] + last[:i]
	}
	return code
}

// contextKeys returns the parameter or property names that fit at the end
// of text: inside an unclosed call of a shape or condition, or inside an
// unclosed species, balance or settings block; nil elsewhere.
func contextKeys(text string) []string {
	depth := 0
	for i := len(text) - 1; i >= 0; i-- {
		switch text[i] {
		case ')', '}':
			depth++
		case '(', '{':
			if depth > 0 {
				depth--
				continue
			}
			head := strings.TrimRight(text[:i], " \t")
			if text[i] == '(' {
				s, _ := wordAt(head, len(head))
				return compile.Parameters(head[s:])
			}
			// A block: the statement keyword starts its line.
			line := head[strings.LastIndexByte(head, '\n')+1:]
			fields := strings.Fields(line)
			if len(fields) > 0 {
				return compile.BlockKeys(fields[0])
			}
			return nil
		}
	}
	return nil
}
