// Package series fits many spectra with one model: the steps of a sputter
// depth profile and the pixels of a spectrum image. Energies are kinetic
// energies in eV, shifts in eV (positive towards higher energy), sputter
// times in s, sputter rates in nm/min and depths in nm.
//
// # Depth profiles
//
// ReadSteps reads the steps from a multi-block file (ISO 14976 SDP or NORM
// blocks, sputter time from the block's experimental variable labelled as
// a sputter or etch time; if no block carries one, the steps are numbered
// 0, 1, 2, ... and the number is used as the time, with a warning) or from
// a folder whose manifest.csv lists "file,sputter_time_s[,block]" per
// line. Sputter times must increase strictly; a missing file, a bad number
// or a time out of order is a *lineshape.InputError naming the file and
// line or block.
//
// Profile prepares one fit.Model on the first step and fits every step
// with Model.Fit: the same model, flags and code as a single fit. The
// uncertainty is fit.Covariance unless ProfileOptions.Bootstrap is set.
// Steps are fitted in parallel, each into its own slot; the bootstrap of
// step i is seeded with Seed + i, so results do not depend on the number
// of workers.
//
// Interfaces (Crossings): a state's fraction passes from below 40 % to
// above 60 % or back (the hysteresis keeps noise near 50 % from counting
// twice); the position is the 50 % crossing, interpolated linearly between
// steps, and the width the distance between the 16 % and 84 % crossings
// either side of it. For an erf-shaped interface of standard deviation s
// the width is 2 s, the usual 16-84 % measure of depth resolution (common
// practice, cf. ISO 14606). With a sputter rate, depth = time x rate / 60.
//
// # Spectrum images
//
// Map fits every pixel of a Cube (NPYCube reads a .npy file with its
// sidecar in tiles; CubeFromSpectra assembles ISO 14976 map blocks) by a
// shifted-reference bank instead of independent fits:
//
//   - fit.Prepare, on a probe spectrum with the cube's axis and mode,
//     validates the references and fixes mode, modulation, window and
//     background degree exactly as a single fit would. The shift scan runs
//     in the model's search space, as a single fit's does: every shift d_s
//     of a grid of step ShiftStep (default 0.1 eV) over [-MaxShift,
//     MaxShift] samples the references through fit.Model.SearchReference
//     (a light Gaussian kernel whose noise gain does not depend on the
//     sub-channel offset, so noisy references do not pull the shift
//     towards half channels), and each pixel's data pass once through
//     fit.Model.SearchData, the same kernel; Legendre polynomials
//     P_0..P_deg on the window (their search-channel part in the scan)
//     are the free background columns.
//   - nnls.NewBank holds one matrix A_s = [R_1(E-d_s) .. R_K(E-d_s) P_0 ..
//     P_deg] per shift, each with its Gram matrix, the Schur complement of
//     the free background columns and the factorizations of every passive
//     set, computed once.
//   - Per pixel b: b^T b and P_j^T b once (the background columns do not
//     move), then R_i(E-d_s)^T b for every reference and shift (K S dot
//     products of window length, the dominant cost), which gives A_s^T b
//     for every shift without touching channel data again.
//   - The NNLS residual sum of squares RSS_s of a shift comes from
//     Bank.SolveNormal, an active-set NNLS in Gram space. A shift's
//     unconstrained least-squares RSS, b^T b - (A_s^T b)^T (A_s^T A_s)^-1
//     A_s^T b from an inverse Gram matrix kept per shift, is a lower bound
//     on RSS_s; the shift with the lowest bound is solved first, and any
//     shift whose bound exceeds the best RSS found (by more than 1e-9 b^T b,
//     for rounding) cannot win and is not solved. The best grid shift is
//     therefore exactly that of a full scan (map_test.go checks it bit for
//     bit), at a fraction of the solves.
//   - The best grid shift minimises RSS_s; a parabola through it and its
//     two neighbours refines the shift (vertex clipped to half a grid step;
//     at the edge of the grid the grid value is kept).
//   - At the refined shift the references are sampled once more from their
//     curves and the pixel is solved as package fit solves it: the Gram
//     matrix of the columns is factored by Cholesky, L L^T, and the small
//     problem min ||L^T x - L^-1 A^T b|| goes to nnls.Solver (if that
//     fails, the pixel is NaN in every map and counted as failed).
//     The coefficients, fractions c_i / sum c_j and reduced chi-square
//     (RSS/DOF)/NoiseSD^2 (NoiseSD from the residual's second differences,
//     DOF = channels - nonzero coefficients - background terms - 1 for the
//     shift) come from that solution.
//
// Accuracy (map_test.go, two-peak test lineshapes of 2-4 eV SD, 0.5 eV
// channels): without noise the refined shift is within 0.01 eV of the
// truth on the 0.1 eV grid (0.005 eV on a 0.05 eV grid) and the fractions
// within 0.0015 (0.0008); solving at the nearest grid point instead would
// leave fraction errors up to 0.008 and inflate the reduced chi-square of
// high signal-to-noise pixels several times. At a peak signal-to-noise
// ratio of 200 the shift RMS error is 0.012 eV and fractions, shifts and
// reduced chi-square agree with fit.Model.Fit on the same pixel to 0.003,
// 0.01 eV and 5 %. Halving ShiftStep doubles the bank and the per-pixel
// cost of the scan.
//
// Parallelism and determinism: pixels are cut into tiles of TilePixels
// consecutive pixels in C order; workers take tiles in turn, each with its
// own Bank workspace and tile buffer, and write every pixel's results to
// its own place. No value depends on another pixel, on the tile size or on
// the order of work, so the maps are bit for bit the same for any Workers.
//
// Memory: besides the output maps (K+2 float64 per pixel, plus the
// coefficients) Map holds only the tile buffers, at most 128 MiB together
// by default, and the bank (S (K+q) window-length columns). A cube is
// never loaded whole. Cancelling the context stops the workers after their
// current tile; Map then returns ctx.Err() and no result, and
// MapResult.WriteDir writes its files into a temporary folder and renames
// them into place only when all are written.
package series
