package nufft

import "math"

// fftPlan computes batched complex DFTs of one power-of-two length n,
//
//	X[j] = Σ_a x[a] · exp(∓2πi a j / n),
//
// minus sign for forward, plus for inverse, unnormalised. The algorithm
// is the self-sorting Stockham form of the radix-4 Cooley–Tukey FFT
// (Cooley & Tukey 1965; Stockham 1966; Van Loan 1992, Computational
// Frameworks for the FFT, sect. 1.7), with one final radix-2 stage when
// log2 n is odd. A batch of b sequences interleaved as x[a·b + c] is
// transformed together, which turns the column transforms of a 2D FFT
// into loops over contiguous memory. The plan holds only read-only
// twiddle tables and may be shared by goroutines.
type fftPlan struct {
	n      int
	stages []fftStage
}

type fftStage struct {
	l      int          // length of the sub-transforms at this stage
	fw, iw []complex128 // for radix 4: w^p, w^2p, w^3p interleaved, p < l/4, w = exp(∓2πi/l)

	// The same twiddles for the assembly stage (fft_amd64.s), each as
	// (re, re, −im, im); nil where there is none.
	fwx, iwx []float64
}

// expandTwiddles returns tw in the layout of fftStage.fwx.
func expandTwiddles(tw []complex128) []float64 {
	x := make([]float64, 4*len(tw))
	for i, w := range tw {
		x[4*i], x[4*i+1], x[4*i+2], x[4*i+3] = real(w), real(w), -imag(w), imag(w)
	}
	return x
}

func newFFTPlan(n int) *fftPlan {
	if n < 1 || n&(n-1) != 0 {
		panic("nufft: FFT length must be a power of two")
	}
	f := &fftPlan{n: n}
	for l := n; l > 1; {
		if l%4 == 0 {
			m := l / 4
			st := fftStage{l: l, fw: make([]complex128, 3*m), iw: make([]complex128, 3*m)}
			for p := range m {
				for r := 1; r <= 3; r++ {
					sn, cs := math.Sincos(-2 * math.Pi * float64(r*p) / float64(l))
					st.fw[3*p+r-1] = complex(cs, sn)
					st.iw[3*p+r-1] = complex(cs, -sn)
				}
			}
			if hasAsm {
				st.fwx, st.iwx = expandTwiddles(st.fw), expandTwiddles(st.iw)
			}
			f.stages = append(f.stages, st)
			l /= 4
		} else { // l == 2
			f.stages = append(f.stages, fftStage{l: 2})
			l = 1
		}
	}
	return f
}

// transform runs a batch of b transforms of the interleaved data in x,
// using y (same length, n·b) as the second buffer, and returns whichever
// of x and y holds the result. Both buffers are overwritten.
func (f *fftPlan) transform(x, y []complex128, b int, inverse bool) []complex128 {
	if len(x) != f.n*b || len(y) != f.n*b {
		panic("nufft: FFT buffer length mismatch")
	}
	return f.stagesFrom(0, x, y, b, inverse)
}

// stagesFrom runs the stages i0, i0+1, … on src, whose stride at stage
// i0 is s, using dst as the second buffer, and returns whichever of the
// two holds the result.
func (f *fftPlan) stagesFrom(i0 int, src, dst []complex128, s int, inverse bool) []complex128 {
	for i := i0; i < len(f.stages); i++ {
		st := &f.stages[i]
		if st.l == 2 {
			if !radix2Fast(dst, src, s) {
				radix2(dst, src, s)
			}
		} else {
			if !radix4Fast(dst, src, st, s, inverse) {
				tw := st.fw
				if inverse {
					tw = st.iw
				}
				radix4(dst, src, tw, st.l, s, inverse)
			}
		}
		if st.l == 2 {
			s *= 2
		} else {
			s *= 4
		}
		src, dst = dst, src
	}
	return src
}

// halfEndsInX reports whether transformHalf leaves its result in x
// (an odd number of stages) rather than in y.
func (f *fftPlan) halfEndsInX() bool { return len(f.stages)%2 == 1 }

// transformHalf is transform for a batch of b sequences whose values
// n/4 … 3n/4−1 are zero, read from rows of src instead of x: value j <
// n/4 of the batch is the row src[(n/4+j)·stride:][:b], value 3n/4+j the
// row src[j·stride:][:b]. The first stage reads only these rows (the
// others would add zeros), so the input is neither copied nor padded.
// It gives the values of transform on the zero-padded input, to the bit
// up to the sign of zeros. x and y (length n·b) are overwritten; src is
// only read.
func (f *fftPlan) transformHalf(src []complex128, stride int, x, y []complex128, b int, inverse bool) []complex128 {
	m := f.n / 4
	if len(x) != f.n*b || len(y) != f.n*b || m == 0 || len(src) < (2*m-1)*stride+b || stride < b {
		panic("nufft: FFT buffer length mismatch")
	}
	st := &f.stages[0]
	if !radix4HalfFast(x, src, stride, st, b, inverse) {
		tw := st.fw
		if inverse {
			tw = st.iw
		}
		radix4Half(x, src, stride, tw, m, b, inverse)
	}
	return f.stagesFrom(1, x, y, 4*b, inverse)
}

// radix4Half is the first Stockham stage (stride s, sub-length 4m) of
// radix4 with the second and third quarters of the input zero: b = c =
// 0 in radix4's butterfly, so a+c = a−c = a, b+d = d, b−d = −d. Row p of
// the fourth quarter is src[p·stride:][:s], row p of the first
// src[(m+p)·stride:][:s].
func radix4Half(dst, src []complex128, stride int, tw []complex128, m, s int, inverse bool) {
	for p := range m {
		w1, w2, w3 := tw[3*p], tw[3*p+1], tw[3*p+2]
		a0 := src[(m+p)*stride:][:s]
		a3 := src[p*stride:][:s]
		d0 := dst[s*4*p : s*4*p+s]
		d1 := dst[s*(4*p+1) : s*(4*p+1)+s]
		d2 := dst[s*(4*p+2) : s*(4*p+2)+s]
		d3 := dst[s*(4*p+3) : s*(4*p+3)+s]
		a3 = a3[:len(a0)]
		d0, d1, d2, d3 = d0[:len(a0)], d1[:len(a0)], d2[:len(a0)], d3[:len(a0)]
		for q, a := range a0 {
			d := a3[q]
			// ±i(b−d) with b−d = −d: i(−d) = (Im d, −Re d) forward,
			// −i(−d) = (−Im d, Re d) inverse.
			jbmd := complex(imag(d), -real(d))
			if inverse {
				jbmd = complex(-imag(d), real(d))
			}
			d0[q] = a + d
			d1[q] = w1 * (a - jbmd)
			d2[q] = w2 * (a - d)
			d3[q] = w3 * (a + jbmd)
		}
	}
}

// radix2 is the last Stockham stage, sub-length 2, no twiddles.
func radix2(dst, src []complex128, s int) {
	a0, a1 := src[:s], src[s:2*s]
	d0, d1 := dst[:s], dst[s:2*s]
	a1, d0, d1 = a1[:len(a0)], d0[:len(a0)], d1[:len(a0)]
	for q, a := range a0 {
		b := a1[q]
		d0[q] = a + b
		d1[q] = a - b
	}
}

// radix4 is one Stockham stage of sub-length l and stride s: for p < l/4
// and q < s it reads src[q + s(p + k l/4)], k = 0..3, and writes
// dst[q + s(4p + r)], r = 0..3.
func radix4(dst, src, tw []complex128, l, s int, inverse bool) {
	m := l / 4
	if s == 1 {
		for p := range m {
			a, b, c, d := src[p], src[p+m], src[p+2*m], src[p+3*m]
			w := tw[3*p : 3*p+3]
			apc, amc, bpd := a+c, a-c, b+d
			bmd := b - d
			jbmd := complex(-imag(bmd), real(bmd)) // i(b−d)
			if inverse {
				jbmd = -jbmd
			}
			o := dst[4*p : 4*p+4]
			o[0] = apc + bpd
			o[1] = w[0] * (amc - jbmd)
			o[2] = w[1] * (apc - bpd)
			o[3] = w[2] * (amc + jbmd)
		}
		return
	}
	for p := range m {
		w1, w2, w3 := tw[3*p], tw[3*p+1], tw[3*p+2]
		a0 := src[s*p : s*p+s]
		a1 := src[s*(p+m) : s*(p+m)+s]
		a2 := src[s*(p+2*m) : s*(p+2*m)+s]
		a3 := src[s*(p+3*m) : s*(p+3*m)+s]
		d0 := dst[s*4*p : s*4*p+s]
		d1 := dst[s*(4*p+1) : s*(4*p+1)+s]
		d2 := dst[s*(4*p+2) : s*(4*p+2)+s]
		d3 := dst[s*(4*p+3) : s*(4*p+3)+s]
		a1, a2, a3 = a1[:len(a0)], a2[:len(a0)], a3[:len(a0)]
		d0, d1, d2, d3 = d0[:len(a0)], d1[:len(a0)], d2[:len(a0)], d3[:len(a0)]
		if inverse {
			for q, a := range a0 {
				b, c, d := a1[q], a2[q], a3[q]
				apc, amc, bpd, bmd := a+c, a-c, b+d, b-d
				jbmd := complex(imag(bmd), -real(bmd)) // −i(b−d)
				d0[q] = apc + bpd
				d1[q] = w1 * (amc - jbmd)
				d2[q] = w2 * (apc - bpd)
				d3[q] = w3 * (amc + jbmd)
			}
		} else {
			for q, a := range a0 {
				b, c, d := a1[q], a2[q], a3[q]
				apc, amc, bpd, bmd := a+c, a-c, b+d, b-d
				jbmd := complex(-imag(bmd), real(bmd)) // i(b−d)
				d0[q] = apc + bpd
				d1[q] = w1 * (amc - jbmd)
				d2[q] = w2 * (apc - bpd)
				d3[q] = w3 * (amc + jbmd)
			}
		}
	}
}
