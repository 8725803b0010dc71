// Package fv2 discretises diffusion–reaction in a short cylinder (a
// tablet, a pellet, a bead of finite length) by conservative finite
// volumes on the r–z rectangle 0 ≤ r ≤ R, 0 ≤ z ≤ L in axisymmetric
// geometry, producing a method-of-lines system for the stiff integrator
// of package solvers. It is the two-dimensional companion of package fv
// and follows its conventions (boundary kinds, ledger lines, the flux
// stencils and the grid map), direction by direction.
//
// # Balance
//
// For each species i,
//
//	κ_i ∂c_i/∂t = D_i (1/r ∂/∂r(r ∂c_i/∂r) + ∂²c_i/∂z²) + Σ_j R_ij c_j + s_i (+ kinetics, extra source),
//
// with κ the capacity (porosity plus linear sorption), D constant, R the
// linear kinetics matrix and s a constant source; nonlinear local
// kinetics come through Spec.Kinetics. The axis r = 0 is a symmetry line;
// the side r = R, the top z = L and the bottom z = 0 each carry, per
// species, a fixed value, a film or an imposed flux (a sealed face being
// a zero flux), with the meanings of fv.Boundary. Amounts are per body
// (mol).
//
// # Cells and unknowns
//
// Cell (i, j) is the annular ring r_i ≤ r ≤ r_{i+1}, z_j ≤ z ≤ z_{j+1}:
// its volume is π(r_{i+1}² − r_i²)Δz_j, the face between columns i−1 and
// i has the area 2π r_i Δz_j and the face between rows j−1 and j the area
// π(r_{i+1}² − r_i²), all exact. The unknowns are the cell averages
// (weight r, as the volume element 2πr dr dz requires), z-major with the
// species interleaved: index ((j·NR) + i)·NSpecies + s.
//
// # Fluxes
//
// The flux through a face is −A D ∂c/∂n averaged over the face. Averaging
// over a row in z commutes with the reconstruction in r, so the radial
// flux through a face of row j is that of package fv's cylinder applied
// to the row's averages: the mean of the derivatives at the face of the
// two quadratics (in r, weight r) that reproduce the averages of the
// cells (i−2, i−1, i) and (i−1, i, i+1); likewise the axial flux through
// a face of column i comes from the slab stencil applied to the column's
// averages. Each stencil is exact for quadratic profiles on every grid,
// so the scheme is second-order accurate on the strongly stretched grids
// used (the leading error is of order h² in each direction). The flux is
// evaluated in the difference form Σ_{m≠1} w_m (c_m − c_1), which is
// exactly zero on a state that does not vary across the face.
//
// At an exterior face a quadratic in the distance from the face is fitted
// to the averages of the two nearest cells along the normal (fv's
// closure, in r with the weight r for the side, in z for the top and the
// bottom): it gives the normal derivative from a fixed value, the face
// value from an imposed flux, and both together with a film
// D ∂c/∂n = H (K c_out − c_s). The axis needs no flux; its value is the
// same fit with a zero slope.
//
// Every interior flux enters the two cells it joins with opposite signs,
// so the discrete balance is exact: d/dt Σ V κ c equals the inflow through
// the exterior faces plus production, to round-off.
//
// # Band
//
// A radial flux involves four cells of one row and an axial flux four
// cells of one column (two rows on each side of the face), so the
// Jacobian has 2·NR·NSpecies sub- and super-diagonals (NR·NSpecies when
// NZ = 2). A compact two-point axial flux would halve the bandwidth (and
// quarter the cost of the banded LU) but, measured on the clustered
// grids used here, doubles the error of a slab (and reverses its sign); it
// was not adopted. The Jacobian is exact: the linear part (diffusion,
// faces, linear kinetics) is assembled once, Spec.Kinetics adds its own
// derivatives. The cost of a step is dominated by the banded LU, of order
// N·NR² (about 4 ms for 40 × 40 cells on the 2-core development machine,
// against 20 µs for Func and 40 µs for Jac).
//
// # Grid
//
// In each direction the cells follow package fv's map: their widths grow
// geometrically with the distance from a clustered face, the spread set
// by Spec.Cluster (default DefaultCluster), with 15 % of the cells spread
// evenly. In r the side is clustered and in z the top and the bottom,
// each when some species has a condition there other than a sealed face;
// a direction without one is uniform. By default NR·NZ ≈ DefaultCells,
// shared in proportion to R and L (the same density in both directions).
// With the top and bottom sealed, the radial faces are exactly those of an
// fv cylinder with NR cells, and with the side sealed, the axial faces
// those of an fv slab 0 ≤ z ≤ L with NZ cells and the same conditions on
// its two faces.
//
// # Accuracy (measured; see the package tests)
//
// With the top and bottom sealed and a start that does not depend on z the
// solution is that of the infinite cylinder of package fv with the same
// radial cells, to 2e-15 over a whole integration; with the side sealed,
// that of the fv slab. For a fixed surface value on every face and a
// uniform start the uptake is within 5.5e-4 (relative) of the product
// solution 1 − (1 − U_cyl)(1 − U_slab) at τ = D t/(κR²) = 0.01, 1.4e-4 at
// τ = 0.1 and 1e-5 from τ = 0.3, on the default grid (28 × 56 cells for
// L = 2R) with the default integrator settings: each factor carries the
// error of a 28-cell grid, about (80/28)² times that of fv's 80-cell
// default. Richardson extrapolation over the default grid and the grid
// with half the cells each way (U + (U − U_half)/3; the map is the same)
// brings it below 4e-5 for τ ≥ 0.01 at 10 % more work. Films (Biot 1 and
// 10 on each factor): within 3.3e-4 at τ = 0.01 and 1.5e-4 at 0.1;
// extrapolated, within 4e-5. Manufactured solutions (Roache 2002; Salari
// & Knupp, SAND2000-1444) show observed orders 1.90 to 2.02 for the cell
// averages, the mean surface value and the mean surface flux, for fixed
// values, films and fluxes on every face family (with time-dependent
// values and a nonlinear sink in the transient check), on grids of 20²,
// 40² and 80² cells; the centre value, where the clustered grid is
// coarsest, 1.81 to 2.13 on the last pair.
//
// # Ledger
//
// The quadratures are, per species, the amounts that entered through the
// side, the top and the bottom, and the amount produced (QuadSide …).
// Integrated by the same linear multistep formula as the state, they close
// the balance initial + inflow − consumed = final to round-off (Ledger);
// with Spec.Kinetics the Problem also supplies QuadJac so that the
// integrator linearises the quadratures exactly as it does the state.
//
// # Differences from package fv
//
// There is no bath (BathIndex is −1, BathValue and EquilibriumWithBath
// return ErrNoBath), no layers, no nonlinear store and no variable
// diffusivity. Centre is the value at r = 0, z = L/2; Surface and
// SurfaceFlux are area-weighted means over the whole exterior surface;
// Profile runs along r at mid-height and ProfileZ along the axis; Field
// gives the cell values for a map. Ledger reports the inflow through all
// three faces as InflowOuter (InflowInner is 0); FaceInflows and the
// quadratures give the split.
package fv2
