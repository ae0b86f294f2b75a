// Package nufft evaluates the Fourier transform of a real image at
// arbitrary (u,v) points, and its adjoint, fast and to a chosen accuracy.
//
// # Sums
//
// For an nx×ny image img[iy*nx+ix] with pixel size p (radians) the pixel
// (ix, iy) sits at x = −(ix − nx/2)·p, y = (iy − ny/2)·p (integer
// division; x east, y north; ../shared/CONVENTIONS.md). For points u_k,
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
// default is 1e-6. The tests check it for 1e-3, 1e-6, 1e-9 and 1e-12 with
// random images and points filling the band, including its edges.
//
// # Kernel
//
// The gridding kernel is Kaiser–Bessel, I0(β√(1−(2x/w)²)), with β from
// Beatty, Nishimura & Pauly 2005 (IEEE TMI 24, 799, eq. 5); its Fourier
// transform is computed by Gauss–Legendre quadrature. The "exponential of
// semicircle" kernel of Barnett et al. 2019 is implemented too and was
// measured at the same width (see TestKernelAccuracy); Kaiser–Bessel was
// the more accurate one.
//
// # Calls
//
// Methods take the destination first, never allocate, and panic with a
// message starting "nufft:" on wrong slice lengths. dst must not alias
// the input. Constructors return errors for bad arguments. A Plan or an
// Exact holds scratch buffers and must not be used by two goroutines at
// once; make one per goroutine (they are cheap compared with their use,
// and share nothing). With Options.Workers > 1 a call itself runs on
// several goroutines: each worker writes a disjoint block or its own
// buffer, and buffers are reduced in a fixed order, so repeated calls
// give bitwise identical results and different worker counts agree to
// about 1e-15 relative.
package nufft
