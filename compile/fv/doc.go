// Package fv discretises one-dimensional diffusion–reaction in a slab, a
// cylinder or a sphere (solid or hollow, in one or more layers, with any
// number of species) by conservative finite volumes, producing a
// method-of-lines system for the stiff integrator of package solvers.
//
// # Balance
//
// In each layer and for each species i,
//
//	κ_i ∂c_i/∂t = r^−ν ∂/∂r(r^ν D_i ∂c_i/∂r) + Σ_j R_ij c_j + s_i (+ kinetics, extra source),
//
// ν = 0, 1, 2 for slab, cylinder, sphere, κ the capacity (porosity plus
// linear sorption), R the linear kinetics matrix and s a constant source.
// A layer may replace κ_i c_i by a nonlinear store q_i(c_i)
// (Layer.Store: porosity plus a sorption isotherm, held in the
// accumulation term, ∂q_i(c_i)/∂t = …) and D_i by a function of the
// position and the concentrations (Layer.Diffusivity); see the sections
// below.
// Amounts are per unit face area for a slab (the half from Spec.Inner to
// the outer face), per unit length for a cylinder and per body for a
// sphere; cell volumes and face areas are the exact geometric ones
// (Δx; π(r₊² − r₋²), 2πr; 4π(r₊³ − r₋³)/3, 4πr²).
//
// # Unknowns and band
//
// The unknowns are the cell averages of each species, interleaved
// (index = cell·NSpecies + species), then one bath value for each species
// with a Bath condition, right after the last cell. Where a species has a
// nonlinear store the cell's unknown is the amount held per unit volume q
// instead of the concentration. A face flux involves
// two cells on each side, so the Jacobian has 2·NSpecies sub- and
// super-diagonals; linear kinetics couple species within a cell, inside
// that band. Problem supplies Func, the exact Jacobian (the linear part is
// assembled once; Spec.Kinetics adds its own derivatives) and the
// quadratures of the ledger.
//
// # Fluxes
//
// The flux through a face inside a layer is −A D ∂c/∂r with the gradient
// taken from the quadratics that reproduce the cell averages (with the
// weight r^ν) of three neighbouring cells, averaged over the two such
// triples that share the face. This is exact for quadratic profiles in
// every geometry and on every grid, so strong grid stretching and the
// r^ν weights near r = 0 do not spoil the accuracy; on a uniform slab grid
// it reduces to the usual two-point difference. The scheme is second-order
// accurate (the leading error is of order h²·c‴).
//
// At a boundary a quadratic p(z) = p0 − g z + k z² in the distance z from
// the face is fitted to the averages of the two nearest cells, which gives
// the face gradient g = ∂c/∂n to second order when p0 is known (Fixed, or a
// bath in equilibrium with the face) and p0 when g is known (Flux,
// Symmetry). For a film, D g = H (K c_out − p0) is solved together with the
// fit. At a contact between layers the two one-sided fits are joined by
// continuity of flux and by the contact condition
// (K c_inner_side − c_outer_side)/R_c = flux (c_outer_side = K·c_inner_side
// without resistance). Every flux is shared by the two cells it joins, so
// the discrete balance is exact: d/dt Σ V κ c equals the boundary inflow
// plus production to round-off.
//
// A well-stirred bath (outer face only) adds V_b dc_b/dt = −A J, J the
// inward flux density; its unknown sits next to the last cell, keeping the
// band.
//
// # Nonlinear stores
//
// With a store q(c) (increasing) the balance is ∂q(c)/∂t = ∇·(D∇c) + r.
// The unknown of such a cell is the amount it holds per unit volume, q_i,
// and its equation is V_i dq_i/dt = Σ (face fluxes) + V_i r_i: the fluxes
// are computed from the concentrations c_i = C(q_i), obtained in every
// cell at every evaluation by a scalar Newton iteration on q(c) = q_i
// (started from the previous evaluation's solution moved along its
// tangent, steps halved until the residual decreases, stopped when the
// step falls below 1e-9 relative, which by quadratic convergence leaves
// an error near round-off).
// Each face flux still enters two cells with opposite signs, so
// d/dt Σ V_i q_i equals the boundary inflow plus production exactly, and
// since a BDF (like any linear multistep formula) is linear in the
// unknowns, the integrated content Σ V_i q_i and the integrated ledger
// quadratures satisfy the same identity at every step: the ledger closes
// to round-off. Taking c as the unknown instead, dc_i/dt =
// (Σ fluxes + V_i r_i)/(V_i q'(c_i)), is not conservative under a BDF:
// the formula then conserves Σ V_i q'(c_i)·(change of c_i) at the new
// time level, which is not the change of Σ V_i q(c_i), so the ledger
// would close only to the local truncation error. The Jacobian follows by
// the chain rule: the columns of ∂f/∂c belonging to such cells are scaled
// by dc/dq = 1/q'(c). The starting amount of a cell is the cell average of
// q(Init(r)); Content is Σ V_i q_i; Profile, Mean, Centre, Surface and
// CellValues report the concentration c. A store that does not increase
// where it is evaluated, so that c cannot be recovered, makes the
// evaluation return NaN (the integrator shortens its step) and is
// reported by EvalError. The inversion is bracketed by c = 0 (q(0) ≤ q_i
// or not) and never steps outside the bracket it has found, so it cannot
// jump over a singularity of the store to another branch (a Langmuir
// isotherm has a pole at c = −1/K beyond which it holds every amount a
// second time). EquilibriumContent and EquilibriumWithBath give the
// content at equilibrium with a surface value or a bath (the latter by a
// safeguarded Newton iteration on the scalar conservation equation), and
// SteadyState solves for the steady state in the concentrations, where the
// store drops out (Newton's method on the amounts held overshoots where
// the store flattens).
//
// # Variable diffusivity
//
// A diffusivity D(r, c) (Layer.Diffusivity) keeps the flux formula
// −A D_f ∂c/∂r with the same gradient weights. Inside a layer D_f is
// evaluated at the face position and at the concentrations interpolated
// linearly between the centroids of the two cells that share the face,
// c_f = θ c_i + (1 − θ) c_{i+1}, θ = (x_{i+1} − r_f)/(x_{i+1} − x_i):
// second-order accurate on any grid, and a convex combination, so D is
// only evaluated within the range of the neighbouring cell values (no
// overshoot near a steep front). At a boundary face D is evaluated at
// the face value of the species: the imposed one for Fixed (K·value) and
// a bath without film (K·c_b), otherwise the face value that the face
// closure gives with the diffusivity of the nearest cell (one fixed-point
// step; the half-cell drop being O(h), its error is O(h²)). A contact
// between layers does the same on each side with the contact closure.
// Other species enter D at their interpolated (inside a layer) or
// nearest-cell (at a face) values. The Jacobian is exact, the ∂D/∂c terms
// included (they couple the species of the two cells beside a face, within
// the band). Measured: steady fluxes through a slab, a spherical shell,
// a film and two layers in contact converge at the observed order 2 to
// the closed forms of the Kirchhoff transformation (the steady slab
// superconverges, order ≈ 4), as does a position-dependent D.
//
// # Grid
//
// Cells cluster toward the faces where gradients are steep early on: the
// outer face, an inner face with a condition other than Symmetry or an
// insulated flux, and both sides of every interface. Within a layer the
// cell density follows lo/(x − a + z0) + hi/(b − x + z0) + w: geometric
// growth of the widths with the distance from a clustered face (a layer
// growing like √(Dt) is resolved equally well at every depth), the spread
// being set by Spec.Cluster (default DefaultCluster = 50), with a uniform
// 15 % share so that the far side of the layer keeps cells. The map is
// fixed for a layer, so refining it keeps second order. By default a body
// has DefaultCells = 80 cells shared between layers in proportion to their
// thickness divided by √(D/κ).
//
// # Accuracy (measured; see the package tests)
//
// On the default grid with the default settings of solvers.Integrate
// (RTol 1e-6), for a fixed surface value and a uniform start, the uptake
// fraction of slab, cylinder and sphere is within 2e-4 (relative) of the
// published series for Fourier numbers 1e-3 ≤ τ ≤ 5e-3 and within 1e-4 for
// 5e-3 ≤ τ ≤ 1; the centre value is within 1e-3·max(value, 0.1). Films
// (Biot 0.1 to 100, K ≠ 1), limited baths (α = 0.5, 2, 10) and first-order
// consumption (φ = 0.5 to 6) are within 2e-4 over 1e-3 ≤ τ ≤ 1. Before
// τ ≈ 1e-3 the steep initial layer spans few cells and the relative error
// of the uptake grows slowly (about 6e-4 at τ = 1e-4, 3e-3 at τ = 1e-5). The steady rate
// through a hollow sphere or cylinder wall (r₁/r₂ = 0.4) is within 2e-4.
// Manufactured solutions (Roache 2002; Salari & Knupp, SAND2000-1444)
// show observed orders of 1.95 to 2.00 for the cell averages, the
// surface value and the surface flux, for every geometry, every boundary
// kind (time-dependent values included), baths with and without film, and
// layered bodies with partition and contact resistance.
//
// Langmuir uptake by a sphere through a film (Biot 10, store
// 0.4 c + 20 c/(1 + 2 c), the benchmark P3 of cmd/massline) is within
// 6e-5 of the reference on the default grid and converges at the observed
// order 2 (80, 160, 320 cells); extrapolated from two fine grids it agrees
// with an independent scipy method of lines to 1e-10.
//
// # Ledger
//
// The quadratures are, per species, the amount that entered through the
// inner face, through the outer face, and the amount produced by reactions
// and sources. Integrated by the same linear multistep formula as the
// state, they close the balance initial + inflow − consumed = final to
// round-off (Ledger), and for a bath the bath's loss equals the outer
// inflow. When the system is nonlinear (a store, a variable diffusivity or
// Kinetics), Newton's iteration leaves a residual that the state carries
// and the quadratures would not; the Problem then also supplies QuadJac,
// the exact derivatives of the quadratures, with which the integrator
// linearises them exactly as it does the state (see solvers.Problem), and
// the ledger again closes to round-off (about 1e-15 on the Langmuir
// benchmark).
//
// # Not covered
//
// A nonlinear store depends on its own species' concentration only, and
// must increase with it. A bath is allowed only at the outer face.
package fv
