package compile

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"github.com/massline/massline/compile/units"
	"github.com/massline/massline/dsl"
	"github.com/massline/massline/dsl/diag"
)

// ---- species ----

var speciesProps = []string{"diffusivity", "molar_mass", "porosity", "tortuosity"}

func (c *checker) checkSpecies() {
	for _, sp := range c.m.Species {
		s := c.specDecl[sp.Name].stmt.(*dsl.Species)
		props, unknown := c.propMap(s.Props, speciesProps, "species")
		var dExpr *Expr
		if p, ok := props["diffusivity"]; ok {
			dExpr, _ = c.want(p.Value, &context{what: "a diffusivity", pos: true, conc: true}, units.Diffusivity, "a diffusivity")
			c.positiveIfConst(p.Value, dExpr, units.Diffusivity, "a diffusivity")
		} else if !unknown {
			c.diags.Add("missing", s.Name.Range, "species %s has no diffusivity; add `diffusivity = ...` to its block", sp.Name)
		}
		if p, ok := props["molar_mass"]; ok {
			sp.MolarMass, _ = c.positive(p.Value, units.MolarMass, "a molar mass")
		}
		if p, ok := props["porosity"]; ok {
			if v, ok := c.constant(p.Value, units.Dimensionless, "a porosity"); ok {
				if v <= 0 || v > 1 {
					c.diags.Add("range", p.Value.Span(), "a porosity must lie in (0, 1], not %g", v)
				}
				sp.Porosity = v
			}
		}
		if p, ok := props["tortuosity"]; ok {
			if v, ok := c.constant(p.Value, units.Dimensionless, "a tortuosity"); ok {
				if v < 1 {
					c.diags.Add("range", p.Value.Span(), "a tortuosity must be at least 1, not %g", v)
				}
				sp.Tortuosity = v
			}
			if sp.Porosity == 0 {
				if _, has := props["porosity"]; !has {
					c.diags.Add("missing", p.Range, "a tortuosity needs a porosity too: the effective diffusivity is diffusivity × porosity / tortuosity")
				}
			}
		}
		if dExpr != nil && sp.Porosity > 0 {
			tau := sp.Tortuosity
			if tau == 0 {
				tau = 1
			}
			dExpr = fold(&Expr{op: opMul, args: []*Expr{dExpr, Const(sp.Porosity / tau)}})
		}
		sp.Diffusivity = dExpr
	}
}

// propMap checks the keys of a property block: unknown and repeated keys
// are reported. unknown is true when some key was not recognised (the
// caller then does not report missing keys: the misspelt one may be it).
func (c *checker) propMap(props []*dsl.Property, allowed []string, what string) (out map[string]*dsl.Property, unknown bool) {
	out = map[string]*dsl.Property{}
	for _, p := range props {
		k := p.Key.Name
		known := false
		for _, a := range allowed {
			if a == k {
				known = true
			}
		}
		if !known {
			d := c.diags.Add("unknown-property", p.Key.Range, "%s has no property %q; it takes %s", what, k, strings.Join(allowed, ", "))
			d.Suggestion = Closest(k, allowed)
			unknown = true
			continue
		}
		if prev, dup := out[k]; dup {
			c.diags.Add("duplicate", p.Key.Range, "%s is set twice", k).Notes = []string{"first set at " + prev.Range.String()}
			continue
		}
		out[k] = p
	}
	return out, unknown
}

// ---- bodies ----

// shapeParams lists each shape's parameters.
var shapeParams = map[string][]string{
	"slab":            {"half_thickness"},
	"cylinder":        {"radius"},
	"sphere":          {"radius"},
	"hollow_cylinder": {"inner", "outer"},
	"hollow_sphere":   {"inner", "outer"},
	"short_cylinder":  {"radius", "length"},
}

var shapeKinds = map[string]Shape{"slab": Slab, "cylinder": Cylinder, "sphere": Sphere,
	"hollow_cylinder": HollowCylinder, "hollow_sphere": HollowSphere, "short_cylinder": ShortCylinder}

// Boundaries returns the names of the outer boundaries of a shape.
func Boundaries(s Shape) []string {
	switch s {
	case HollowCylinder, HollowSphere:
		return []string{"inner", "outer"}
	case ShortCylinder:
		return []string{"axis", "side", "top", "bottom"}
	}
	return []string{"centre", "surface"}
}

func (c *checker) checkBodies() {
	names := make([]string, 0, len(c.bodyDecl))
	for n := range c.bodyDecl {
		names = append(names, n)
	}
	sort.Slice(names, func(i, j int) bool { return declBefore(c.bodyDecl[names[i]], c.bodyDecl[names[j]]) })
	for _, n := range names {
		s := c.bodyDecl[n].stmt.(*dsl.Body)
		b := c.body(s)
		if b == nil {
			c.bodyFailed = true
			continue
		}
		c.bodies[n] = b
		c.symbols[n].B = b
		c.symbols[n].Doc = fmt.Sprintf("body %s: %s", n, b.Shape)
		c.m.Bodies = append(c.m.Bodies, b)
	}
}

func (c *checker) body(s *dsl.Body) *Body {
	kind, ok := shapeKinds[s.Shape.Fun.Name]
	if !ok {
		var cands []string
		for k := range shapeKinds {
			cands = append(cands, k)
		}
		c.diags.Add("unknown-shape", s.Shape.Fun.Range, "%q is not a shape; use slab, cylinder, sphere, hollow_cylinder, hollow_sphere or short_cylinder", s.Shape.Fun.Name).
			Suggestion = Closest(s.Shape.Fun.Name, cands)
		return nil
	}
	args, ok := c.args(s.Shape, shapeParams[s.Shape.Fun.Name], shapeParams[s.Shape.Fun.Name])
	if !ok {
		return nil
	}
	b := &Body{Name: s.Name.Name, Def: s.Name.Range, Shape: kind, Conditions: map[string]map[int]*Condition{}}
	okAll := true
	get := func(key, role string) float64 {
		v, ok := c.positive(args[key].Value, units.Length, role)
		okAll = okAll && ok
		return v
	}
	switch kind {
	case Slab:
		b.Outer = get("half_thickness", "a half-thickness")
	case Cylinder, Sphere:
		b.Outer = get("radius", "a radius")
	case HollowCylinder, HollowSphere:
		b.Inner = get("inner", "an inner radius")
		b.Outer = get("outer", "an outer radius")
		if okAll && b.Inner >= b.Outer {
			c.diags.Add("range", args["inner"].Value.Span(), "the inner radius (%s) must be smaller than the outer radius (%s)",
				c.shown(args["inner"].Value, b.Inner, units.Length), c.shown(args["outer"].Value, b.Outer, units.Length))
			okAll = false
		}
	case ShortCylinder:
		b.Outer = get("radius", "a radius")
		b.Length = get("length", "a length")
	}
	if !okAll {
		return nil
	}
	if len(s.Layers) == 0 {
		b.Regions = []*Region{{Name: b.Name, Inner: b.Inner, Outer: b.Outer, Balances: map[int]*Balance{}}}
		return b
	}
	if kind == ShortCylinder {
		c.diags.Add("unsupported", s.Layers[0].Range, "a short cylinder cannot be layered")
		return nil
	}
	inner := b.Inner
	innerText := "the centre"
	if kind == HollowCylinder || kind == HollowSphere {
		innerText = c.shown(args["inner"].Value, b.Inner, units.Length) + ", the inner radius"
	}
	seen := map[string]bool{}
	for i, l := range s.Layers {
		to, ok := c.positive(l.To, units.Length, "a layer's outer position")
		if !ok {
			return nil
		}
		if seen[l.Name.Name] {
			c.diags.Add("duplicate", l.Name.Range, "layer %s is named twice", l.Name.Name)
			return nil
		}
		seen[l.Name.Name] = true
		if to <= inner {
			c.diags.Add("range", l.To.Span(), "layer %s must end beyond %s", l.Name.Name, innerText)
			return nil
		}
		if i == len(s.Layers)-1 && math.Abs(to-b.Outer) > 1e-9*b.Outer {
			c.diags.Add("range", l.To.Span(), "the last layer must end at the body's outer surface (%s), not %s",
				c.shown(outerArg(args), b.Outer, units.Length), c.shown(l.To, to, units.Length))
			return nil
		}
		b.Regions = append(b.Regions, &Region{Name: b.Name + "." + l.Name.Name, Layer: l.Name.Name, Inner: inner, Outer: to, Balances: map[int]*Balance{}})
		inner = to
		innerText = c.shown(l.To, to, units.Length) + ", where layer " + l.Name.Name + " ends"
	}
	b.Regions[len(b.Regions)-1].Outer = b.Outer
	return b
}

// outerArg returns the value of the argument that sets a body's outer
// size, or nil.
func outerArg(args map[string]*dsl.Arg) dsl.Expr {
	for _, k := range []string{"outer", "radius", "half_thickness"} {
		if a, ok := args[k]; ok {
			return a.Value
		}
	}
	return nil
}

// args matches a call's arguments to parameter names: positional ones in
// order, then named ones. Missing required parameters are reported.
func (c *checker) args(call *dsl.Call, params, required []string) (map[string]*dsl.Arg, bool) {
	out := map[string]*dsl.Arg{}
	ok := true
	named := false
	for i, a := range call.Args {
		if a.Name == nil {
			if named {
				c.diags.Add("argument", a.Range, "a positional argument cannot follow a named one")
				ok = false
				continue
			}
			if i >= len(params) {
				switch len(params) {
				case 0:
					c.diags.Add("argument", a.Range, "%s takes no arguments", call.Fun.Name)
				case 1:
					c.diags.Add("argument", a.Range, "%s takes one argument, %s", call.Fun.Name, params[0])
				default:
					c.diags.Add("argument", a.Range, "%s takes at most %d arguments: %s", call.Fun.Name, len(params), strings.Join(params, ", "))
				}
				ok = false
				continue
			}
			out[params[i]] = a
			continue
		}
		named = true
		k := a.Name.Name
		if !contains(params, k) {
			if len(params) == 0 {
				c.diags.Add("argument", a.Name.Range, "%s takes no arguments", call.Fun.Name)
			} else {
				c.diags.Add("argument", a.Name.Range, "%s has no parameter %q; it takes %s", call.Fun.Name, k, strings.Join(params, ", ")).
					Suggestion = Closest(k, params)
			}
			ok = false
			continue
		}
		if _, dup := out[k]; dup {
			c.diags.Add("argument", a.Name.Range, "%s is given twice", k)
			ok = false
			continue
		}
		out[k] = a
	}
	for _, r := range required {
		if _, has := out[r]; !has && ok {
			if r == "value" {
				c.diags.Add("argument", call.Range, "%s needs a value: %s(...)", call.Fun.Name, call.Fun.Name)
			} else {
				c.diags.Add("argument", call.Range, "%s needs %s = ...", call.Fun.Name, r)
			}
			ok = false
		}
	}
	return out, ok
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

// ---- balances ----

var balanceProps = []string{"diffusivity", "source", "store"}

// region resolves body or body.layer. It returns the body and the regions
// the path covers (all layers when it names the body).
func (c *checker) region(p *dsl.Path) (*Body, []*Region, bool) {
	name := p.Parts[0].Name
	b, ok := c.bodies[name]
	if !ok {
		if _, declared := c.bodyDecl[name]; declared || c.broken[name] {
			return nil, nil, false // the body had an error already
		}
		var cands []string
		for n := range c.bodyDecl {
			cands = append(cands, n)
		}
		c.diags.Add("unknown-name", p.Parts[0].Range, "%q is not a body", name).Suggestion = Closest(name, cands)
		return nil, nil, false
	}
	c.m.Info.Uses[p.Parts[0]] = c.symbols[name]
	switch len(p.Parts) {
	case 1:
		return b, b.Regions, true
	case 2:
		layer := p.Parts[1].Name
		var cands []string
		for _, r := range b.Regions {
			if r.Layer == layer {
				return b, []*Region{r}, true
			}
			cands = append(cands, r.Layer)
		}
		if b.Regions[0].Layer == "" {
			c.diags.Add("unknown-name", p.Parts[1].Range, "body %s has no layers", name)
		} else {
			c.diags.Add("unknown-name", p.Parts[1].Range, "body %s has no layer %q", name, layer).Suggestion = Closest(layer, cands)
		}
		return nil, nil, false
	}
	c.diags.Add("syntax", p.Range, "%s: write a body or body.layer", p.String())
	return nil, nil, false
}

func (c *checker) speciesRef(id *dsl.Ident) (*Species, bool) {
	sp, ok := c.species[id.Name]
	if !ok {
		if c.broken[id.Name] {
			return nil, false
		}
		var cands []string
		for n := range c.species {
			cands = append(cands, n)
		}
		c.diags.Add("unknown-name", id.Range, "%q is not a species", id.Name).Suggestion = Closest(id.Name, cands)
		return nil, false
	}
	c.m.Info.Uses[id] = c.symbols[id.Name]
	return sp, true
}

func (c *checker) checkBalances() {
	// Whole-body balances first, then per-layer ones, which override.
	sort.SliceStable(c.balances, func(i, j int) bool {
		return len(c.balances[i].stmt.(*dsl.Balance).Region.Parts) < len(c.balances[j].stmt.(*dsl.Balance).Region.Parts)
	})
	for _, d := range c.balances {
		s := d.stmt.(*dsl.Balance)
		sp, ok1 := c.speciesRef(s.Species)
		b, regions, ok2 := c.region(s.Region)
		if !ok1 || !ok2 {
			c.balFailed[s.Region.Parts[0].Name] = true
			continue
		}
		props, _ := c.propMap(s.Props, balanceProps, "a balance")
		bal := &Balance{Def: s.Range}
		axial := b.Shape == ShortCylinder
		if p, ok := props["diffusivity"]; ok {
			bal.Diffusivity, _ = c.want(p.Value, &context{what: "a diffusivity", pos: true, axial: axial, conc: true}, units.Diffusivity, "a diffusivity")
			c.positiveIfConst(p.Value, bal.Diffusivity, units.Diffusivity, "a diffusivity")
		}
		if p, ok := props["source"]; ok {
			var good bool
			bal.Source, good = c.want(p.Value, &context{what: "a source", pos: true, axial: axial, conc: true, time: true}, units.ReactionRate, "a source (production rate per volume)")
			if !good {
				c.failed["source:"+b.Name+":"+sp.Name] = true
			}
		}
		if p, ok := props["store"]; ok {
			bal.Store, _ = c.want(p.Value, &context{what: "a store (amount held per volume)", pos: true, axial: axial, conc: true}, units.Concentration, "a store (amount held per volume)")
			if bal.Store != nil && !bal.Store.Depends(len(c.m.Species)).Species[sp.Index] {
				c.diags.Add("store", p.Value.Span(), "the store of %s must depend on the concentration %s (e.g. porosity * %s + sorbed amount)", sp.Name, sp.Name, sp.Name)
			}
		}
		if !contains(intNames(b.Species), fmt.Sprint(sp.Index)) {
			b.Species = append(b.Species, sp.Index)
		}
		for _, r := range regions {
			old := r.Balances[sp.Index]
			nb := *bal
			if old != nil && len(s.Region.Parts) == 2 {
				// A layer balance refines the body's: unset parts stay.
				if nb.Diffusivity == nil {
					nb.Diffusivity = old.Diffusivity
				}
				if nb.Source == nil {
					nb.Source = old.Source
				}
				if nb.Store == nil {
					nb.Store = old.Store
				}
			}
			r.Balances[sp.Index] = &nb
		}
	}
	for _, b := range c.m.Bodies {
		sort.Ints(b.Species)
		if c.opts.Lenient || c.hasBad || c.balFailed[b.Name] {
			continue
		}
		if len(b.Species) == 0 {
			d := c.bodyDecl[b.Name].stmt.(*dsl.Body)
			hint := "balance <species> in " + b.Name
			if len(c.m.Species) > 0 {
				hint = "balance " + c.m.Species[0].Name + " in " + b.Name
			}
			c.diags.Add("missing", d.Name.Range, "body %s has no balance; state what diffuses in it, e.g. `%s`", b.Name, hint)
			continue
		}
		for _, r := range b.Regions {
			for _, si := range b.Species {
				if r.Balances[si] == nil {
					c.diags.Add("missing", c.bodyDecl[b.Name].stmt.(*dsl.Body).Name.Range,
						"layer %s has no balance for %s", r.Name, c.m.Species[si].Name)
				}
			}
		}
	}
}

func intNames(xs []int) []string {
	out := make([]string, len(xs))
	for i, x := range xs {
		out[i] = fmt.Sprint(x)
	}
	return out
}

// ---- boundary conditions ----

// condParams lists each condition's parameters and the required ones.
var condParams = map[string][2][]string{
	"symmetry": {nil, nil},
	"sealed":   {nil, nil},
	"fixed":    {{"value"}, {"value"}},
	"flux":     {{"value"}, {"value"}},
	"film":     {{"coefficient", "bulk", "partition"}, {"coefficient", "bulk"}},
	"bath":     {{"volume", "start", "particles", "film", "partition", "area", "length"}, {"volume"}},
	"contact":  {{"partition", "resistance"}, nil},
}

var condKinds = map[string]CondKind{"symmetry": Symmetry, "sealed": Sealed, "fixed": Fixed, "flux": Flux,
	"film": Film, "bath": Bath, "contact": Contact}

// boundaryKey resolves the place of a boundary statement to a body and
// boundary name ("surface", or "core|coat" for an interface).
func (c *checker) boundaryPlace(s *dsl.Boundary) (*Body, string, bool) {
	name := s.Place.Parts[0].Name
	b, ok := c.bodies[name]
	if !ok {
		if _, declared := c.bodyDecl[name]; declared || c.broken[name] {
			return nil, "", false
		}
		var cands []string
		for n := range c.bodyDecl {
			cands = append(cands, n)
		}
		c.diags.Add("unknown-name", s.Place.Parts[0].Range, "%q is not a body", name).Suggestion = Closest(name, cands)
		return nil, "", false
	}
	c.m.Info.Uses[s.Place.Parts[0]] = c.symbols[name]
	if len(s.Place.Parts) != 2 {
		c.diags.Add("syntax", s.Place.Range, "write the boundary as %s.<side>, e.g. %s.%s", name, name, Boundaries(b.Shape)[len(Boundaries(b.Shape))-1])
		return nil, "", false
	}
	side := s.Place.Parts[1].Name
	if s.Interface != nil {
		if b.Regions[0].Layer == "" {
			c.diags.Add("unknown-name", s.Place.Range.Join(s.Interface.Range), "%s|%s is not an interface: body %s has no layers", side, s.Interface.Name, name)
			return nil, "", false
		}
		var layers []string
		for i, r := range b.Regions {
			if r.Layer == side && i+1 < len(b.Regions) && b.Regions[i+1].Layer == s.Interface.Name {
				return b, side + "|" + s.Interface.Name, true
			}
			layers = append(layers, r.Layer)
		}
		c.diags.Add("unknown-name", s.Place.Range.Join(s.Interface.Range), "%s|%s is not an interface of %s; layers touch in the order %s",
			side, s.Interface.Name, name, strings.Join(layers, ", "))
		return nil, "", false
	}
	if side == "center" {
		side = "centre"
	}
	sides := Boundaries(b.Shape)
	if !contains(sides, side) {
		c.diags.Add("unknown-name", s.Place.Parts[1].Range, "a %s has no boundary %q; its boundaries are %s", b.Shape, side, strings.Join(sides, ", ")).
			Suggestion = Closest(side, sides)
		return nil, "", false
	}
	return b, side, true
}

// condition checks one condition call at a boundary of a body.
func (c *checker) condition(b *Body, place string, call *dsl.Call) (*Condition, bool) {
	name := call.Fun.Name
	kind, ok := condKinds[name]
	if !ok {
		var cands []string
		for k := range condKinds {
			cands = append(cands, k)
		}
		c.diags.Add("unknown-condition", call.Fun.Range, "%q is not a boundary condition; use symmetry, sealed, fixed, film, flux, bath or contact", name).
			Suggestion = Closest(name, cands)
		return nil, false
	}
	isInterface := strings.Contains(place, "|")
	switch {
	case isInterface && kind != Contact:
		c.diags.Add("condition", call.Fun.Range, "between layers the condition must be contact(...), not %s", name)
		return nil, false
	case !isInterface && kind == Contact:
		c.diags.Add("condition", call.Fun.Range, "contact(...) belongs between two layers (write body.inner_layer|outer_layer)")
		return nil, false
	case kind == Symmetry && place != "centre" && place != "axis":
		c.diags.Add("condition", call.Fun.Range, "symmetry applies only at a centre or axis; for a face that nothing crosses write sealed")
		return nil, false
	case (place == "centre" || place == "axis") && kind != Symmetry:
		c.diags.Add("condition", call.Fun.Range, "the %s of a %s must have the condition symmetry", place, b.Shape)
		return nil, false
	case kind == Bath && (place == "inner" || b.Shape == ShortCylinder):
		c.diags.Add("condition", call.Fun.Range, "a bath can surround only the outer surface of a slab, cylinder, sphere or hollow body")
		return nil, false
	}
	p := condParams[name]
	args, ok := c.args(call, p[0], p[1])
	if !ok {
		return nil, false
	}
	cond := &Condition{Kind: kind, Def: call.Range, Partition: 1}
	tctx := &context{what: "a boundary value", time: true}
	okAll := true
	check := func(ok bool) { okAll = okAll && ok }
	if a, has := args["value"]; has {
		dim, role := units.Concentration, "a fixed surface value"
		if kind == Flux {
			dim, role = units.MolarFlux, "an imposed flux (amount per area and time)"
		}
		var ok bool
		cond.Value, ok = c.want(a.Value, tctx, dim, role)
		check(ok)
		if kind != Flux {
			c.warnNegative(a.Value, cond.Value, role)
		}
	}
	if a, has := args["coefficient"]; has {
		v, ok := c.positive(a.Value, units.Velocity, "a film coefficient")
		cond.Coefficient = v
		check(ok)
	}
	if a, has := args["bulk"]; has {
		var ok bool
		cond.Value, ok = c.want(a.Value, tctx, units.Concentration, "a bulk value")
		check(ok)
		c.warnNegative(a.Value, cond.Value, "a bulk value")
	}
	if a, has := args["partition"]; has {
		v, ok := c.positive(a.Value, units.Dimensionless, "a partition coefficient")
		cond.Partition = v
		check(ok)
	}
	if a, has := args["resistance"]; has {
		v, ok := c.constant(a.Value, units.Dimensionless.Div(units.Velocity), "a contact resistance")
		if ok && v < 0 {
			c.diags.Add("range", a.Value.Span(), "a contact resistance cannot be negative")
			ok = false
		}
		cond.Resistance = v
		check(ok)
	}
	if kind == Bath {
		vol, ok := c.positive(args["volume"].Value, units.Volume, "a bath volume")
		check(ok)
		n := 1.0
		if a, has := args["particles"]; has {
			n, ok = c.positive(a.Value, units.Dimensionless, "a number of particles")
			check(ok)
		}
		cond.Particles = n
		if a, has := args["start"]; has {
			cond.BathStart, ok = c.constant(a.Value, units.Concentration, "a bath's starting value")
			check(ok)
			if ok {
				c.warnNegative(a.Value, Const(cond.BathStart), "a bath's starting value")
			}
		}
		if a, has := args["film"]; has {
			cond.Coefficient, ok = c.positive(a.Value, units.Velocity, "a film coefficient")
			check(ok)
		}
		per := vol / n
		switch b.Shape {
		case Slab:
			a, has := args["area"]
			if !has {
				c.diags.Add("argument", call.Range, "a bath around a slab needs area = the exposed face area of one slab (both faces)")
				return nil, false
			}
			area, ok := c.positive(a.Value, units.Area, "an exposed area")
			check(ok)
			per /= area
		case Cylinder, HollowCylinder:
			a, has := args["length"]
			if !has {
				c.diags.Add("argument", call.Range, "a bath around a cylinder needs length = the length of one cylinder")
				return nil, false
			}
			l, ok := c.positive(a.Value, units.Length, "a cylinder length")
			check(ok)
			per /= l
		default:
			for _, k := range []string{"area", "length"} {
				if a, has := args[k]; has {
					c.diags.Add("argument", a.Range, "%s applies to a bath around a slab (area) or cylinder (length), not a %s", k, b.Shape)
					check(false)
				}
			}
		}
		cond.BathVolume = per
	}
	return cond, okAll
}

func (c *checker) checkBoundaries() {
	type key struct {
		body, place string
		species     int
	}
	where := map[key]*decl{}
	for _, d := range c.bounds {
		s := d.stmt.(*dsl.Boundary)
		b, place, ok := c.boundaryPlace(s)
		if !ok {
			// The statement was meant for some boundary of this body (or,
			// when the body is unknown, of any body): do not report its
			// boundaries as missing.
			if _, known := c.bodies[s.Place.Parts[0].Name]; known {
				c.failed[s.Place.Parts[0].Name+".*"] = true
			} else {
				c.failed["*"] = true
			}
			continue
		}
		targets := b.Species
		if s.Species != nil {
			sp, ok := c.speciesRef(s.Species)
			if !ok {
				c.failed[b.Name+"."+place] = true
				continue
			}
			if !containsInt(b.Species, sp.Index) {
				if !c.balFailed[b.Name] && !c.hasBad {
					c.diags.Add("condition", s.Species.Range, "%s has no balance in %s, so it needs no condition there", sp.Name, b.Name)
				}
				continue
			}
			targets = []int{sp.Index}
		}
		c.setMassSpecies(targets)
		cond, ok := c.condition(b, place, s.Condition)
		c.massSpecies = -1
		if !ok {
			c.failed[b.Name+"."+place] = true
			continue
		}
		for _, si := range targets {
			k := key{b.Name, place, si}
			if prev, dup := where[k]; dup {
				if prev.chunk == d.chunk || !c.opts.Redefine {
					c.diags.Add("duplicate", s.Range, "%s.%s already has a condition for %s", b.Name, place, c.m.Species[si].Name).
						Notes = []string{"the first is at " + prev.stmt.Span().String()}
					continue
				}
			}
			where[k] = d
			if b.Conditions[place] == nil {
				b.Conditions[place] = map[int]*Condition{}
			}
			b.Conditions[place][si] = cond
		}
	}
}

func containsInt(xs []int, x int) bool {
	for _, v := range xs {
		if v == x {
			return true
		}
	}
	return false
}

// ---- initial state ----

func (c *checker) checkInitials() {
	// Whole-body starting values first, then per-layer ones, which
	// override them whatever their order in the file.
	sort.SliceStable(c.initials, func(i, j int) bool {
		return len(c.initials[i].stmt.(*dsl.Initially).Region.Parts) < len(c.initials[j].stmt.(*dsl.Initially).Region.Parts)
	})
	for _, d := range c.initials {
		s := d.stmt.(*dsl.Initially)
		sp, ok1 := c.speciesRef(s.Species)
		b, regions, ok2 := c.region(s.Region)
		if !ok1 || !ok2 {
			continue
		}
		if !containsInt(b.Species, sp.Index) {
			if !c.balFailed[b.Name] && !c.hasBad {
				c.diags.Add("initial", s.Species.Range, "%s has no balance in %s, so it needs no starting value there", sp.Name, b.Name)
			}
			continue
		}
		ctx := &context{what: "a starting value", pos: true, axial: b.Shape == ShortCylinder}
		c.massSpecies = sp.Index
		e, ok := c.want(s.Value, ctx, units.Concentration, "a starting value")
		c.massSpecies = -1
		c.warnNegative(s.Value, e, "a starting value")
		if !ok {
			for _, r := range regions {
				c.failed["initially:"+r.Name+":"+sp.Name] = true
			}
			continue
		}
		for _, r := range regions {
			if bal := r.Balances[sp.Index]; bal != nil {
				bal.Initial = e
			}
		}
	}
}

// ---- stages ----

func (c *checker) checkStages() {
	sort.SliceStable(c.stages, func(i, j int) bool { return declBefore(c.stages[i], c.stages[j]) })
	for _, d := range c.stages {
		s := d.stmt.(*dsl.Stage)
		dur, ok := c.positive(s.Duration, units.Time, "a stage's duration")
		if !ok {
			continue
		}
		st := &Stage{Name: s.Name.Name, Def: s.Range, Duration: dur, Conditions: map[string]map[string]map[int]*Condition{}}
		type key struct {
			body, place string
			species     int
		}
		where := map[key]*dsl.Boundary{}
		for _, in := range s.Stmts {
			bs, isBoundary := in.(*dsl.Boundary)
			if !isBoundary {
				if _, isBad := in.(*dsl.BadStmt); !isBad {
					c.diags.Add("stage", in.Span(), "a stage may hold only boundary statements (the conditions that change)")
				}
				continue
			}
			b, place, ok := c.boundaryPlace(bs)
			if !ok {
				continue
			}
			targets := b.Species
			if bs.Species != nil {
				sp, ok := c.speciesRef(bs.Species)
				if !ok {
					continue
				}
				if !containsInt(b.Species, sp.Index) {
					if !c.balFailed[b.Name] && !c.hasBad {
						c.diags.Add("condition", bs.Species.Range, "%s has no balance in %s, so it needs no condition there", sp.Name, b.Name)
					}
					continue
				}
				targets = []int{sp.Index}
			}
			c.setMassSpecies(targets)
			cond, ok := c.condition(b, place, bs.Condition)
			c.massSpecies = -1
			if !ok {
				continue
			}
			if st.Conditions[b.Name] == nil {
				st.Conditions[b.Name] = map[string]map[int]*Condition{}
			}
			if st.Conditions[b.Name][place] == nil {
				st.Conditions[b.Name][place] = map[int]*Condition{}
			}
			for _, si := range targets {
				k := key{b.Name, place, si}
				if prev, dup := where[k]; dup {
					c.diags.Add("duplicate", bs.Range, "stage %s already sets %s.%s for %s", st.Name, b.Name, place, c.m.Species[si].Name).
						Notes = []string{"the first is at " + prev.Range.String()}
					continue
				}
				where[k] = bs
				if old := b.Conditions[place][si]; old != nil && (old.Kind == Bath) != (cond.Kind == Bath) {
					c.diags.Add("stage", bs.Range, "a stage cannot switch %s.%s between a bath and another condition", b.Name, place)
					continue
				}
				st.Conditions[b.Name][place][si] = cond
			}
		}
		c.m.Stages = append(c.m.Stages, st)
	}
}

// ---- completeness ----

func (c *checker) checkCompleteness() {
	for _, b := range c.m.Bodies {
		d := c.bodyDecl[b.Name].stmt.(*dsl.Body)
		places := Boundaries(b.Shape)
		for i := 0; i+1 < len(b.Regions); i++ {
			places = append(places, b.Regions[i].Layer+"|"+b.Regions[i+1].Layer)
		}
		for _, place := range places {
			if c.failed[b.Name+"."+place] || c.failed[b.Name+".*"] || c.failed["*"] {
				continue
			}
			for _, si := range b.Species {
				if b.Conditions[place][si] == nil {
					dg := c.diags.Add("missing", d.Name.Range, "boundary %s.%s has no condition for %s; add `boundary %s.%s for %s: ...`",
						b.Name, place, c.m.Species[si].Name, b.Name, place, c.m.Species[si].Name)
					for _, st := range c.m.Stages {
						if st.Conditions[b.Name][place][si] != nil {
							dg.Notes = append(dg.Notes, "stages change a condition but do not replace a missing one: state it outside the stages too (for a bath, the bath itself; a stage may then restate it with a new start)")
							break
						}
					}
				}
			}
		}
		for _, r := range b.Regions {
			for _, si := range b.Species {
				if bal := r.Balances[si]; bal != nil && bal.Initial == nil && !c.failed["initially:"+r.Name+":"+c.m.Species[si].Name] {
					c.diags.Add("missing", d.Name.Range, "%s has no starting value in %s; add `initially %s: %s = ...`",
						c.m.Species[si].Name, r.Name, r.Name, c.m.Species[si].Name)
				}
			}
		}
	}
	for _, sp := range c.m.Species {
		used := false
		for _, b := range c.m.Bodies {
			used = used || containsInt(b.Species, sp.Index)
		}
		if !used && len(c.bodyDecl) > 0 && !c.bodyFailed && len(c.balFailed) == 0 {
			c.diags.Warn("unused", sp.Def, "species %s has no balance in any body", sp.Name)
		}
	}
}

// ---- run and settings ----

// MaxOutputTimes bounds the number of output times one run may request.
const MaxOutputTimes = 100000

func (c *checker) checkRun() {
	total := 0.0
	for _, s := range c.m.Stages {
		total += s.Duration
	}
	if c.runDecl == nil {
		return
	}
	s := c.runDecl.stmt.(*dsl.Run)
	c.runFailed = true
	run := &Run{Def: s.Range, Steady: s.Steady}
	if s.Steady {
		if len(c.m.Stages) > 0 {
			c.diags.Add("run", s.Range, "a steady state cannot be combined with stages")
			return
		}
		c.m.Run = run
		c.runFailed = false
		return
	}
	switch {
	case s.Until != nil:
		v, ok := c.positive(s.Until, units.Time, "the end time")
		if !ok {
			return
		}
		if len(c.m.Stages) > 0 && math.Abs(v-total) > 1e-9*total {
			c.diags.Add("run", s.Until.Span(), "the stages last %s in all, but the run ends at %s; leave out `until` or make them agree", fmtTime(total), fmtTime(v))
			return
		}
		run.Until = v
	case len(c.m.Stages) > 0:
		run.Until = total
	case len(s.At) > 0:
		// run at T1, T2, …: the run ends at the last time.
		for _, a := range s.At {
			if v, ok := c.constant(a, units.Time, "an output time"); ok && v > run.Until {
				run.Until = v
			}
		}
		if run.Until <= 0 {
			c.diags.Add("run", s.Range, "say how long to run: run until 2 [h] every 5 [min], or give output times with run at")
			return
		}
	default:
		c.diags.Add("run", s.Range, "say how long to run: run until 2 [h] every 5 [min] (every and log need until; run at T1, T2 ends at the last time)")
		return
	}
	times := []float64{0}
	switch {
	case s.Every != nil:
		dt, ok := c.positive(s.Every, units.Time, "the output spacing")
		if !ok {
			return
		}
		n := math.Floor(run.Until/dt + 1e-9)
		if n > MaxOutputTimes {
			c.diags.Add("range", s.Every.Span(), "this asks for %.0f output times; the limit is %d", n, MaxOutputTimes)
			return
		}
		for i := 1; i <= int(n); i++ {
			times = append(times, float64(i)*dt)
		}
	case len(s.At) > 0:
		for _, a := range s.At {
			v, ok := c.constant(a, units.Time, "an output time")
			if !ok {
				return
			}
			if v < 0 || v > run.Until*(1+1e-12) {
				c.diags.Add("range", a.Span(), "the output time %s lies outside the run (0 to %s)", fmtTime(v), fmtTime(run.Until))
				return
			}
			times = append(times, v)
		}
	case s.LogN != nil:
		nf, ok := c.constant(s.LogN, units.Dimensionless, "a number of output times")
		if !ok {
			return
		}
		if nf < 2 || nf != math.Trunc(nf) || nf > MaxOutputTimes {
			c.diags.Add("range", s.LogN.Span(), "the number of log-spaced times must be a whole number from 2 to %d", MaxOutputTimes)
			return
		}
		t1, ok := c.positive(s.From, units.Time, "the first log-spaced time")
		if !ok {
			return
		}
		if t1 >= run.Until {
			c.diags.Add("range", s.From.Span(), "the first log-spaced time must come before the end of the run")
			return
		}
		n := int(nf)
		for i := 0; i < n; i++ {
			times = append(times, t1*math.Pow(run.Until/t1, float64(i)/float64(n-1)))
		}
	default:
		for i := 1; i <= 50; i++ {
			times = append(times, run.Until*float64(i)/50)
		}
	}
	if times[len(times)-1] < run.Until*(1-1e-12) {
		times = append(times, run.Until)
	}
	sort.Float64s(times)
	uniq := times[:1]
	for _, t := range times[1:] {
		if t > uniq[len(uniq)-1] {
			uniq = append(uniq, t)
		}
	}
	run.Times = uniq
	c.m.Run = run
	c.runFailed = false
}

var settingKeys = []string{"rtol", "atol", "cells", "method", "cluster", "extrapolate", "estimate"}

// Methods lists the time-integration methods a settings block may name.
var Methods = []string{"bdf"}

func (c *checker) checkSettings() {
	type setAt struct {
		chunk int
		p     *dsl.Property
	}
	earlier := map[string]setAt{}
	for _, d := range c.settings {
		s := d.stmt.(*dsl.Settings)
		props, _ := c.propMap(s.Props, settingKeys, "settings")
		for k, p := range props {
			if prev, ok := earlier[k]; ok && prev.chunk == d.chunk {
				c.diags.Add("duplicate", p.Key.Range, "%s is already set by an earlier settings statement", k).
					Notes = []string{"first set at " + prev.p.Range.String()}
				delete(props, k)
				continue
			}
			earlier[k] = setAt{d.chunk, p}
		}
		st := &c.m.Settings
		if p, ok := props["rtol"]; ok {
			if v, ok := c.positive(p.Value, units.Dimensionless, "a relative tolerance"); ok {
				if v >= 1 || v < 1e-13 {
					c.diags.Add("range", p.Value.Span(), "a relative tolerance must lie between 1e-13 and 1, not %g", v)
				}
				st.RTol = v
			}
		}
		if p, ok := props["atol"]; ok {
			if v, ok := c.positive(p.Value, units.Concentration, "an absolute tolerance"); ok {
				st.ATol = v
			}
		}
		if p, ok := props["cells"]; ok {
			if v, ok := c.positive(p.Value, units.Dimensionless, "a number of cells"); ok {
				if v != math.Trunc(v) || v < 3 || v > 100000 {
					c.diags.Add("range", p.Value.Span(), "the number of cells must be a whole number from 3 to 100000, not %g", v)
				}
				st.Cells = int(v)
			}
		}
		if p, ok := props["cluster"]; ok {
			if v, ok := c.constant(p.Value, units.Dimensionless, "a clustering strength"); ok {
				if v < 1 || v > 1000 {
					c.diags.Add("range", p.Value.Span(), "cluster is the ratio of the widest to the narrowest cell: from 1 (uniform) to 1000, not %g", v)
				}
				st.Cluster = v
			}
		}
		for _, key := range []string{"extrapolate", "estimate"} {
			p, ok := props[key]
			if !ok {
				continue
			}
			id, isIdent := p.Value.(*dsl.Ident)
			if !isIdent || (id.Name != "on" && id.Name != "off") {
				d := c.diags.Add("setting", p.Value.Span(), "%s takes on or off", key)
				if isIdent {
					d.Suggestion = Closest(id.Name, []string{"on", "off"})
				}
				continue
			}
			if key == "extrapolate" {
				st.Extrapolate = id.Name == "on"
			} else {
				st.Estimate = id.Name == "on"
			}
		}
		if p, ok := props["method"]; ok {
			id, isIdent := p.Value.(*dsl.Ident)
			if !isIdent || !contains(Methods, id.Name) {
				d := c.diags.Add("setting", p.Value.Span(), "the method must be one of: %s", strings.Join(Methods, ", "))
				if isIdent {
					d.Suggestion = Closest(id.Name, Methods)
				}
			} else {
				st.Method = id.Name
			}
		}
	}
}

// fmtTime writes a time in seconds in a readable unit.
func fmtTime(s float64) string {
	switch {
	case s >= 86400:
		return fmt.Sprintf("%.4g d", s/86400)
	case s >= 3600:
		return fmt.Sprintf("%.4g h", s/3600)
	case s >= 60:
		return fmt.Sprintf("%.4g min", s/60)
	}
	return fmt.Sprintf("%.4g s", s)
}

var _ = diag.Range{}

// setMassSpecies names the species whose molar mass converts a mass
// concentration (mg/L) written in the statement being checked: the one
// target species, or none when the statement covers several.
func (c *checker) setMassSpecies(targets []int) {
	c.massSpecies = -1
	if len(targets) == 1 {
		c.massSpecies = targets[0]
	}
}

// positiveIfConst reports a constant expression that is not a positive,
// finite number (zero, negative, NaN or infinite).
func (c *checker) positiveIfConst(e dsl.Expr, x *Expr, dim units.Dim, role string) {
	if x == nil {
		return
	}
	v, isConst := x.IsConst()
	if !isConst {
		return
	}
	if math.IsNaN(v) || math.IsInf(v, 0) {
		c.diags.Add("range", e.Span(), "%s evaluates to %g, not a number", role, v)
	} else if v <= 0 {
		c.diags.Add("range", e.Span(), "%s must be positive, not %s", role, c.shown(e, v, dim))
	}
}

// warnNegative warns about a constant concentration below zero: allowed
// (deviation variables exist) but more often a slip.
func (c *checker) warnNegative(e dsl.Expr, x *Expr, role string) {
	if x == nil {
		return
	}
	if v, ok := x.IsConst(); ok && v < 0 {
		c.diags.Warn("negative", e.Span(), "%s is negative (%g mol/m^3); concentrations below zero are unusual", role, v)
	}
}
