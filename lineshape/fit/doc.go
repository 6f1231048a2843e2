// Package fit decomposes a spectrum into a nonnegative combination of
// reference spectra of known chemical states, with energy-shift alignment,
// a free polynomial background, honest uncertainties and quality measures.
//
// # Use
//
// Prepare brings an unknown and its references to one mode and one energy
// grid and returns a Model; Model.Fit fits a spectrum on that grid. A depth
// profile or a spectrum image prepares once and fits every spectrum with
// the same Model (Fit is safe for concurrent use):
//
//	m, err := fit.Prepare(unknown, refs, fit.Options{})
//	res, err := m.Fit(ctx, unknown)
//	for _, c := range res.Components { fmt.Println(c.State, c.Fraction, c.FractionCI95) }
//
// Energies are kinetic energies in eV; shifts are in eV, positive towards
// higher energy.
//
// # Preparation
//
// If any spectrum is a derivative (dN/dE), the fit works in derivative
// mode and direct spectra are converted by lock-in emulation
// (lineshape.Spectrum.LockIn) with the modulation recorded with the
// derivative spectra, or Options.Modulation. Derivative spectra recorded
// with modulations more than 10 % apart are refused: a recorded modulation
// cannot be undone. The window defaults to the overlap of the unknown with
// every reference, trimmed at each end by MaxShift (so a shifted reference
// never needs data it does not have) and by half the modulation where a
// spectrum was converted; a requested window is intersected with it, with a
// warning when truncated and an error when less than half remains. Fewer
// than 20 channels is an error. The grid is the unknown's channels inside
// the window; for the coefficients, references are sampled on it by their
// monotone cubic Curve. The shift search works in a smoothed copy of the
// problem (below), whose references Prepare samples at every shift of the
// scan grid once.
//
// # Model
//
// The model of the data y on the window is
//
//	y(E) = sum_i c_i R_i(E - d_i) + sum_j b_j P_j(t),  t = 2 (E - lo)/(hi - lo) - 1,
//
// with c_i >= 0, free-sign background coefficients b_j of the Legendre
// polynomials P_0..P_deg (degree Options.Background, default 1; Legendre
// polynomials on [-1, 1] keep the background columns orthogonal-ish and
// well conditioned) and shifts |d_i| <= MaxShift. For given shifts the
// problem is linear: the columns are scaled to unit norm, the Gram matrix
// is factored by Cholesky, and the equivalent small problem goes to
// nnls.Solver (Lawson & Hanson, Solving Least Squares Problems, 1974,
// ch. 23, with free variables). This is the fitting with standards of
// Wager & Wilmsen (J. Appl. Phys. 1979) with nonnegativity, and a shift per
// reference as combined with NNLS by Ogiwara & Tanuma (Hyomen Kagaku 13
// (1992) 606).
//
// Shifts: ShiftNone uses the references as recorded. ShiftCommon scans one
// shift shared by all references exhaustively over [-MaxShift, MaxShift]
// at most 0.05 eV apart (sub-channel values by interpolation), then refines
// the best by Brent's method (Brent, Algorithms for Minimization without
// Derivatives, 1973) within one scan step on either side. ShiftEach starts
// from the best common shift and makes coordinate sweeps: each reference's
// shift in turn is scanned with the others fixed (over the whole grid in
// the first sweep, within 4 grid steps of its value in later sweeps) and
// refined by Brent's method; sweeps stop when no shift moves by more than
// 0.001 eV (at most 20). A shift within 0.01 eV of its bound is reported
// (ShiftAtBound) with a warning.
//
// # Shift search space
//
// References are measured spectra with noise of their own. Sampled at a
// whole-channel shift on their own grid, a reference carries its full
// noise into the model; at a fractional shift the interpolant averages
// neighbouring nodes and carries less (for cubic interpolation of white
// noise 0.64 of the variance half-way between nodes). Less noise in the
// model lowers the residual sum of squares, so a search on interpolated
// references is pulled away from whole channels: with standards recorded
// at twice the unknown's noise, a planted shift of 0 was found at about
// +/-0.2 eV, two modes, and a planted 0.2 eV at 0.24 eV
// (TestShiftBiasNoisyReferences).
//
// The shifts are therefore searched with both sides seen through one
// Gaussian kernel of SD sigma = 1.0 times the coarsest node spacing of the
// unknown and the references, truncated at 4 sigma: each reference is
// evaluated at E - d as sum_j w_j y_j / sum_j w_j over its own nodes x_j,
// w_j = exp(-(x_j - E + d)^2 / (2 sigma^2)), and the unknown is smoothed by
// the same kernel at its own channels (a symmetric filter, so the shift
// is not moved; the same blur on both sides, so the lineshapes still
// match). With sigma at least one node spacing the kernel's noise gain
// sum_j w_j^2 / (sum_j w_j)^2 depends on the position between nodes by
// about 2 exp(-pi^2) = 1e-4 (Poisson summation), so no shift is favoured.
// The smoothing needs 4 sigma of data on each side, so the search uses the
// window less that margin (4 channels at each end when the grids agree);
// a polynomial background stays a polynomial of the same degree under a
// symmetric kernel, so its columns are the background basis on those
// channels. If less than half the window would remain, the search uses the
// interpolated references with a warning. Once the shifts are found, the
// coefficients, the quality measures and the uncertainties are computed at
// them with the references sampled by their Curves and the unknown as
// recorded: the smoothing only chooses the shifts. Weighting the shift
// criterion by the kernel loses a little of the shift's precision when the
// lineshapes have structure at the scale of the kernel; the covariance SD
// of the shift assumes the unweighted criterion.
//
// Collinear references (condition number of the unit-column design above
// 1e7) are refused with a *CollinearError naming the pair with the
// largest partial correlation. Prepare warns when two references, with the
// background projected out of each over the window, correlate more
// strongly than 0.95 (for two references alone each coefficient's SD then
// grows by 1/sqrt(1-r^2), more than 3 times), or else when the condition
// number exceeds 1e3.
//
// Options.MaxShift may be at most 50 eV and must be below the unknown's
// energy range; Prepare refuses a larger bound with a
// *lineshape.InputError.
//
// # Fractions
//
// The fraction of state i is c_i / sum_j c_j, the share of pure-standard
// signal when the references are kept at the relative intensity they were
// recorded with. Options.Normalize rescales the references first; the
// result then warns that a fraction means something else. Atomic
// fractions need matrix corrections (package quant).
//
// # Quality
//
//   - Points: channels in the window; DOF: Points minus the nonzero
//     coefficients, the background terms and the fitted shifts.
//   - NoiseSD: from the second differences of the residual,
//     sigma^2 = sum (r_{i+1} - 2 r_i + r_{i-1})^2 / (6 (n - 2)), exact for
//     white noise and insensitive to smooth misfit. For data smoothed
//     before export it is smaller than the true noise.
//   - Chi2Reduced: (RSS / DOF) / NoiseSD^2; near 1 for a good fit of
//     unsmoothed data; above 1 for misfit, and for smoothed data.
//   - RFactor: sum (y - model)^2 / sum y^2 over the window.
//   - ResidualRMS: sqrt(RSS / Points).
//   - CorrelationFactor f = 1 + 2 sum_k rho_k, the residual autocorrelations
//     rho_k summed over the lags k = 1, 2, ... while rho_k stays above
//     1.5/sqrt(n), each corrected for the -p/n bias that fitting p smooth
//     parameters gives; n/f is the effective number of independent channels.
//   - Structure left in the residual: the window is cut into 8 segments;
//     if the residual variance of one exceeds the median segment variance
//     by more than stationary noise with (n/8)/f effective channels per
//     segment would give (1 % false alarms, at least a factor 4), Fit warns that the references may not span the
//     unknown and names the segment. Stationary noise, smoothed or not,
//     passes; a missing state leaves its residual where its peaks are.
//     (A reduced chi-square test alone cannot tell misfit from smoothed
//     noise.)
//
// # Uncertainty
//
// Covariance: the Jacobian J of all fitted parameters at the solution
// (reference columns, background columns and, for fitted shifts, the
// columns c_i dR_i(E - d_i)/dd_i by central differences of the
// interpolant) gives Cov = s^2 f (J^T J)^-1, s^2 = RSS/DOF (that is, scaled
// by the reduced chi-square) and f the correlation factor. Fraction SDs
// follow by the delta method with the full covariance of the coefficients
// (df_i/dc_j = (delta_ij - f_i)/S). 95 % intervals are fraction +/- t SD
// clipped to [0, 1], t the Student quantile for n/f - p degrees of
// freedom.
//
// Bootstrap (the default): residuals, centred and inflated by
// sqrt(n / (n - L p)) sqrt(f / f_L), are resampled in circular moving blocks of L
// channels (Kuensch, Ann. Statist. 17 (1989) 1217), L = max(n^(1/3),
// 2 lags + 1) with lags the correlated lags above, at most n/(2p); each
// sample is added to the fitted model and refitted from scratch, shifts
// included. The first factor restores the variance the fit removes from
// block sums (about L p / n; for L = 1 it is the usual sqrt(n/(n - p))),
// the second the correlation lost at block joins: f_L = 1 + 2 sum (1 - k/L)
// rho_k is what blocks of L channels keep of f. When
// the unknown is a direct spectrum of counts (Meta.Counts) the samples are
// Poisson draws of the counts instead, converted like the unknown. SDs are
// the sample SDs; 95 % intervals are the 2.5 % and 97.5 % percentiles
// (the (B+1)p-th order statistics, Hyndman & Fan type 6). Sample b draws
// from a PCG generator seeded with (Seed, b), so results do not depend on
// Workers. Options.Samples defaults to 300.
//
// A component whose coefficient is zero (at its bound) has fraction 0 and
// a one-sided interval [0, U]: U is the 95 % percentile of its bootstrap
// fractions, or t_0.95 times the SD its coefficient would have if it were
// free, over the sum of coefficients. Intervals never reach below zero.
//
// The others are then not known exactly either: they may lose signal to
// the components at zero. If a share b of the sum went to those, an
// active fraction f would become f (1 - b). Covariance: with SD_B the SD
// of the sum of the at-zero coefficients if they were all free (from the
// same extended Jacobian, jointly), over the sum of coefficients, an
// active fraction's SD is the delta-method SD and f SD_B in quadrature,
// and the lower end of its interval is f - hypot(t_0.975 SD, f t_0.95
// SD_B); the upper end is not moved. With one active component that is
// fraction 1, interval [1 - t_0.95 SD_B, 1] and SD SD_B: the mirror of the
// one-sided limit of the components at zero. Bootstrap: a sole active
// component gets [5 % percentile, 1], the mirror of their 95 % percentile;
// its SD is the sample SD as always.
//
// Calibration (see calib_test.go): over 200 (or, with -calib, 1000) noise
// realisations of a two-state mixture with counting-like noise at a
// peak-to-peak signal-to-noise ratio of 50, white or smoothed by a 5-point
// running mean, both methods' 95 % intervals cover the true fraction 90-99 %
// of the time.
//
// # Ownership
//
// Prepare and Fit do not modify their arguments. A Result's slices are its
// own.
package fit
