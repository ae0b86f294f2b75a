// Package nufft evaluates the Fourier transform of a real image at
// arbitrary (u,v) points, and its adjoint, fast and to a chosen accuracy.
//
// # Sums
//
// For an nx×ny image img[iy*nx+ix] with pixel size p (radians) the pixel
// (ix, iy) sits at x = −(ix − nx/2)·p, y = (iy − ny/2)·p (integer
// division; x east, y north; CONVENTIONS.md at the repository root). For points u_k,
// v_k in cycles per radian,
//
//	Forward: dst[k] = Σ_p img[p] · exp(−2πi (u_k x_p + v_k y_p))
//	Adjoint: dst[p] = Re Σ_k vis[k] · exp(+2πi (u_k x_p + v_k y_p))
//
// Neither is normalised: Forward of an image with total flux F gives F at
// u = v = 0, and a point source at (x0, y0) gives exp(−2πi(u x0 + v y0)).
// Adjoint is the exact adjoint of Forward for the real inner products,
// Re⟨Forward(x), y⟩ = ⟨x, Adjoint(y)⟩, also for the approximate Plan, so
// gradients computed with it are gradients of what Forward computes.
// Both sums are periodic in u·p and v·p with period 1; points outside the
// band |u|, |v| ≤ 1/(2p) are valid and alias as the sums do.
//
// # Types
//
// Exact evaluates the sums directly (separable exponential tables, about
// nx·ny operations per point). Plan is a non-uniform FFT (type 2 for
// Forward, type 1 for Adjoint, in the terms of Dutt & Rokhlin 1993): the
// image is divided by the gridding kernel's Fourier transform, padded to
// an upsampled grid (factor 2: the smallest power of two at least 2n per
// side), transformed by a 2D FFT that skips the all-zero rows, and
// interpolated to the points with a separable kernel of width w cells;
// Adjoint runs the transposed steps (spreading, FFT, correction). New
// returns whichever of the two is expected to be faster.
//
// # Accuracy
//
// Options.Tol is the requested relative l2 error ‖f̃ − f‖₂/‖f‖₂ against
// the exact sum over all points (Barnett, Magland & af Klinteberg 2019,
// SIAM J. Sci. Comput. 41, C479, eq. 4.1), from 1e-13 to 1e-1; the
// default is 1e-6. The kernel width w (cells of the upsampled grid) is
// the smallest whose measured error is at most Tol/1.25: w = 4, 7, 11, 14
// for Tol = 1e-3, 1e-6, 1e-9, 1e-12, with measured errors of about
// 6.6e-4, 7.2e-7, 9.9e-11 and 1.2e-13 for zero-mean random images. The
// error depends a little on the data: for an all-positive 128×128 image
// and random points none of which is near the origin it was 1.07e-6 at
// Tol = 1e-6 (w = 7; the w = 7 kernel is at about 1e-6 whatever β), so a
// caller who needs a strict bound asks for half the tolerance, which
// costs one more cell of width (about 30% more time per point). The
// benchmarks report the error of their own data. The tests check Tol for 1e-3,
// 1e-6, 1e-9 and 1e-12 with random images and points filling the band,
// including its edges, on square and non-square grids. At Tol ≥ 1e-6 the
// per-point kernel weights are stored as float32 (their rounding adds
// about 3e-8 relative), which halves the plan's per-point memory.
//
// # Kernel
//
// The gridding kernel is Kaiser–Bessel, I0(β√(1−(2x/w)²)), with
// β = π√((w/σ)²(σ−1/2)² − 0.8), σ = 2 (Beatty, Nishimura & Pauly 2005,
// IEEE TMI 24, 799, eq. 5); its Fourier transform, needed for the
// correction, is computed by Gauss–Legendre quadrature. NewPlan takes
// the weights of the points from a polynomial per tap fitted to the
// kernel (Chebyshev interpolation, Horner's rule; the piecewise
// polynomial kernel of Barnett et al. 2019, sect. 4), whose degree
// (8 at w = 7) keeps the fit's error below a hundredth of the
// transform's (TestKernelPoly), instead of summing the series of I0. The "exponential
// of semicircle" kernel exp(β(√(1−z²)−1)), β = 2.30·w (Barnett et al.
// 2019) is implemented too: at equal width Kaiser–Bessel was 1.4–2.3
// times more accurate (TestKernelAccuracy), so it is the one used.
//
// # Cost and memory
//
// NewPlan stores the points of one half of the (u,v) plane (v > 0) at
// (−u, −v) and conjugates their values (the transform of a real image
// takes conjugate values there), so that Forward needs only about half
// the rows of the upsampled grid and Adjoint spreads into half of them. It sorts the
// points into bins of 8 fine rows (by row bin, then column), and stores
// for each point its grid offsets, whether it is mirrored and its 2w
// kernel weights: 13 + 8w bytes (float32 weights) or 13 + 16w bytes,
// plus 16 bytes of scratch. It holds the upsampled grid of Forward
// (16·fx·fy bytes for an fx×fy grid, fx the smallest power of two ≥
// 2·nx) in the same memory as the spreading bands of Adjoint, which take
// a little over half of it (at most 8 bands, one per 4(w+8) of the fy/2
// fine rows that the points reach, which overlap by at most w+7 rows),
// a quarter grid for the hand-over
// between the column and the row transforms, and small FFT scratch:
// about 1.3 to 1.45 grids plus 85 bytes per point at Tol = 1e-6. A call
// costs about 2w² multiply-adds per point and one 2D FFT of the
// upsampled grid restricted by the symmetry of real images and the zero
// rows and columns of the padded image: the y transforms on pairs of
// image columns, the x transforms on half the rows. With several
// workers, the phases that divide the grid by rows (spreading, x
// transforms, interpolation) hand their shards out in the same order of
// rows, so that one transposition (the quarter grid) is all the data
// that passes between processor caches within a call. NewPlan computes the weights in shards on
// the plan's workers and writes every buffer of the calls once, so that
// the first call is not slowed by fresh memory pages.
//
// # Assembly
//
// On amd64 the interpolation and spreading loops (widths 2 to 10), the
// FFT stages and the conjugate copies of the Hermitian symmetry run in
// assembly: SSE2, the amd64 baseline, with one complex value per
// register, and AVX (three-operand forms, two columns at once in the
// FFT) where the processor has it; with AVX2 the spreading works on
// pairs of cells and reads the caller's values through the permutation
// itself. Every assembly loop does the operations of its Go loop in the
// same order, with no fused multiply-add, so results are the same bits
// with or without assembly and on any amd64 processor. The build tag
// purego, and every other architecture, compile the portable Go loops
// only; the tests run both forms in one build (TestPortableLoops,
// TestGriddingAVX, TestRadix4Asm). GOAMD64=v3 is optional and changes
// the Go loops' results only by rounding.
//
// # Calls
//
// A Plan keeps its points sorted by grid position (in bands of rows,
// then by column, with the two halves of each run of 128 points
// interleaved so that the spreading does not wait on its own stores).
// ForwardSorted and AdjointSorted take the visibilities in that order
// (Order gives it) and skip the scattered stores and gathered loads of
// Forward and Adjoint, with the same bits; a caller that keeps its data
// in the plan's order pays the permutation once instead of at every
// call.
//
// Methods take the destination first, never allocate, and panic with a
// message starting "nufft:" on wrong slice lengths. dst must not alias
// the input. Constructors return errors for bad arguments. A Plan or an
// Exact holds scratch buffers and must not be used by two goroutines at
// once; make one per goroutine (they share nothing). Use them through
// the pointers the constructors return and do not copy the structs: the
// helper goroutines of a parallel transform stop when its pointer
// becomes unreachable. With Options.Workers > 1 a call itself runs on
// several goroutines. Every step of a call is divided into shards fixed
// by the problem (image size, points, tolerance), never by the number of
// workers, who only take shards in turn; each shard writes a disjoint
// block or its own buffer, and the spreading buffers of Adjoint are
// summed in shard order. Results are therefore bitwise identical for any
// number of workers and any scheduling (TestWorkers). The helpers are
// woken once per call, not once per step: the shards of all steps are
// taken from one counter, and a step starts once the one before it has
// finished (TestPoolSteps). After a call a helper keeps looking for work
// for 50 µs before it blocks, so calls in quick succession do not wait
// for a parked thread to wake; that costs up to 50 µs of processor time
// per helper and call.
package nufft
