// Package analytic gives published analytic solutions of diffusion in a
// slab, a cylinder and a sphere, for use as test oracles and in benchmarks.
//
// # Conventions
//
// The body is a slab of half-thickness a exposed on both faces (the
// mid-plane is a plane of symmetry), an infinite cylinder of radius a, or a
// sphere of radius a; ν = 0, 1, 2 respectively, and the balance is
//
//	∂C/∂t = D r^−ν ∂/∂r(r^ν ∂C/∂r),  ∂C/∂r = 0 at r = 0.
//
// Time enters through the Fourier number τ = D t / a². When the body holds
// solute in a capacity (porosity plus linear sorption) κ, so that
// κ ∂C/∂t = D ∇²C, use τ = D t / (κ a²). Results are dimensionless
// fractions, stated on each type:
//
//   - FixedSurface: surface held at Cs from t = 0 (uptake Mt/M∞, centre).
//   - Film: inward flux h (K·Cb − C(a)) through a film from a fluid at Cb
//     with partition coefficient K; Biot number L = h a / D.
//   - Bath: well-stirred bath of limited volume V, C(a) = K·Cb(t),
//     α = V / (K Vp).
//   - Reaction: fixed surface with first-order consumption −kC, Thiele
//     modulus φ = a √(k/D); Effectiveness gives η(φ).
//   - Flux: constant inward flux F (slab and sphere).
//   - Shell: steady transfer through the wall of a hollow body.
//
// # Eigenfunction series
//
// With u the fraction still to come, u(r, 0) = 1, separation of variables
// gives u = Σ A_n X_n(β_n r/a) exp(−β_n² τ) with X = cos x, J0(x),
// sin(x)/x. The eigenvalues are roots of
//
//	fixed surface: X(β) = 0;  film: β X'(β) + L X(β) = 0;
//	bath:          (α/(ν+1)) β² X(β) = β X'(β)
//
// (the last from V dCb/dt = −A D ∂C/∂r with V = α K Vp and Vp/A = a/(ν+1)).
// They are found one at a time in brackets known from the interlacing of
// the zeros of sin, cos, J0 and J1 (each bracket is stated beside its
// equation), by Newton's method safeguarded with bisection, and cached. The
// coefficients of the film problem follow by orthogonality with the weight
// r^ν, A_n = ∫ X_n r^ν dr / ∫ X_n² r^ν dr; for example for the slab
// A_n = 2 sin β / (β + sin β cos β) = 2L / ((β² + L² + L) cos β) with
// β tan β = L, and the mean of X_n is sin β/β, which gives the uptake
// weights 2L² / (β² (β² + L² + L)). The cylinder (X = J0, ∫ J0² r dr =
// (J0² + J1²)/2, β J1 = L J0) and the sphere (X = sin x / x, β cot β = 1 − L)
// go the same way and agree with Crank (1975) §4.3.2, §5.3.2, §6.3.2 (from
// memory). The bath coefficients are Crank's (§4.3.5, §5.3.4, §6.3.4, eq.
// 6.30 for the sphere); the tests check that they sum to one.
//
// A series is summed from its smallest to its largest term and truncated
// once β_n² τ > 60, where the neglected terms are below 1e-26 of the first.
// The sums are accurate to about 1e-13 in absolute terms (round-off), which
// is also the relative accuracy wherever a fraction exceeds about 1e-3.
// At small τ the number of terms grows like τ^−½; beyond MaxTerms terms
// (τ below about 5e-9) a series-only quantity returns ErrFourierTooSmall.
//
// # Short times
//
// Below τ = ShortTime (0.1) the slab and sphere use the error-function
// forms obtained by the method of images (Crank (1975) §4.3.1 and §6.3.1,
// from memory), which converge in a few terms there. For the cylinder,
// below τ = CylinderShortTime (1e-3), the uptake uses the small-time
// expansion that follows from its Laplace transform
//
//	M̄/M∞ = 2 I1(√s) / (s^(3/2) I0(√s)),
//	I1(z)/I0(z) ~ Σ c_k z^−k,  c_0 = 1,
//	c_m = ((m − 2) c_{m−1} − Σ_{i=1}^{m−1} c_i c_{m−i}) / 2,
//
// the recurrence coming from the Riccati equation R' = 1 − R/z − R² for
// R = I1/I0; term-by-term inversion gives Mt/M∞ = Σ 2 c_k τ^((k+1)/2) /
// Γ((k+3)/2) = 4√(τ/π) − τ − τ^(3/2)/(3√π) − τ²/8 − …, up to terms of order
// exp(−1/τ). Twelve terms agree with the series to 2e-16 for τ ≤ 3e-3. The
// sphere's surface value under a constant flux uses, below τ = 0.02, the
// inverse of 1/(s(√s coth √s − 1)) with coth √s = 1, namely
// e^τ (1 + erf √τ) − 1 (the series Σ τ^(m/2)/Γ(m/2 + 1), m ≥ 1).
//
// # First-order reaction
//
// Danckwerts' transformation (Crank (1975) §14.2) turns the fixed-surface
// series into that with reaction: with μ_n = β_n² + φ² and a_n = 2(ν+1)/β_n²
// the weights of the uptake series, the content is
// η − Σ a_n β_n²/μ_n exp(−μ_n τ), η = Σ a_n β_n²/μ_n being the
// effectiveness factor, and the amount absorbed adds the amount consumed,
// φ² ∫ content dτ. The constant Σ a_n β_n²/μ_n² = −dη/d(φ²) is taken in
// closed form (see etaSlope), with power series free of cancellation at
// small φ.
//
// # Modified Bessel functions
//
// BesselI0 and BesselI1 (and the scaled BesselI0e, BesselI1e) sum the power
// series up to x = 20 (all terms positive) and the large-argument expansion
// beyond, to a relative accuracy of a few 1e-16; the tests compare both
// branches with each other and with the integral representation.
//
// # References
//
//   - J. Crank, The Mathematics of Diffusion, 2nd ed., Oxford (1975).
//   - H. S. Carslaw and J. C. Jaeger, Conduction of Heat in Solids, 2nd ed.,
//     Oxford (1959).
//   - R. Aris, The Mathematical Theory of Diffusion and Reaction in
//     Permeable Catalysts, Oxford (1975).
//   - M. Abramowitz and I. A. Stegun, Handbook of Mathematical Functions,
//     NBS (1964), ch. 9.
//
// Section and equation numbers quoted in this package are from memory
// unless stated otherwise; the tests check each formula by independent
// means (limits, balances, agreement of two forms, the finite-volume code).
package analytic
