//go:build !purego

package nufft

// radix4SSE2 is the assembly form of radix4 (fft_amd64.s): one stage of
// sub-length 4m and stride s, twiddles from expandTwiddles, mask from
// jMask.
//
//go:noescape
func radix4SSE2(dst, src *complex128, tw *float64, mask *[2]uint64, m, s int)

// radix4AVX is radix4SSE2 on two columns at once, for even s.
//
//go:noescape
func radix4AVX(dst, src *complex128, tw *float64, mask *[2]uint64, m, s int)

// jMask flips the sign of the low (forward) or high (inverse) half of
// a swapped complex, turning swap(x) into i·x or −i·x.
var jMask = [2][2]uint64{{1 << 63, 0}, {0, 1 << 63}}

// radix4Fast runs the stage in assembly and reports that it did.
func radix4Fast(dst, src []complex128, st *fftStage, s int, inverse bool) bool {
	if !useAsm {
		return false
	}
	m := st.l / 4
	if len(src) < 4*m*s || len(dst) < 4*m*s {
		panic("nufft: FFT buffer length mismatch")
	}
	tw, mask := st.fwx, &jMask[0]
	if inverse {
		tw, mask = st.iwx, &jMask[1]
	}
	if useAVX && s%2 == 0 {
		radix4AVX(&dst[0], &src[0], &tw[0], mask, m, s)
	} else {
		radix4SSE2(&dst[0], &src[0], &tw[0], mask, m, s)
	}
	return true
}

// radix4HalfSSE2 is the assembly form of radix4Half: row p of the
// fourth quarter at src + p·stride, of the first at src + (m+p)·stride;
// mask from jMask, the other one than radix4SSE2's.
//
//go:noescape
func radix4HalfSSE2(dst, src *complex128, tw *float64, mask *[2]uint64, m, s, stride int)

// radix4HalfAVX is radix4HalfSSE2 on two columns at once, for even s.
//
//go:noescape
func radix4HalfAVX(dst, src *complex128, tw *float64, mask *[2]uint64, m, s, stride int)

// radix4HalfFast runs radix4Half in assembly and reports that it did.
func radix4HalfFast(dst, src []complex128, stride int, st *fftStage, s int, inverse bool) bool {
	if !useAsm {
		return false
	}
	m := st.l / 4
	if len(dst) < 4*m*s || m == 0 || len(src) < (2*m-1)*stride+s || stride < s {
		panic("nufft: FFT buffer length mismatch")
	}
	// i(−d) = swap(d) with the high half negated; −i(−d) the low half.
	tw, mask := st.fwx, &jMask[1]
	if inverse {
		tw, mask = st.iwx, &jMask[0]
	}
	if useAVX && s%2 == 0 {
		radix4HalfAVX(&dst[0], &src[0], &tw[0], mask, m, s, stride)
	} else {
		radix4HalfSSE2(&dst[0], &src[0], &tw[0], mask, m, s, stride)
	}
	return true
}

//go:noescape
func conjRevSSE2(dst, src *complex128, n int)

//go:noescape
func addConjRevSSE2(dst, src *complex128, n int)

//go:noescape
func conjRevAVX(dst, src *complex128, n int)

//go:noescape
func addConjRevAVX(dst, src *complex128, n int)

// conjRev sets dst[j] = conj(src[len(src)−1−j]); the lengths must match.
func conjRev(dst, src []complex128) {
	if len(dst) != len(src) {
		panic("nufft: conjRev length mismatch")
	}
	switch {
	case !useAsm:
		conjRevGo(dst, src)
	case len(dst) == 0:
	case useAVX:
		conjRevAVX(&dst[0], &src[len(src)-1], len(dst))
	default:
		conjRevSSE2(&dst[0], &src[len(src)-1], len(dst))
	}
}

// addConjRev adds conj(src[len(src)−1−j]) to dst[j]; the lengths must
// match.
func addConjRev(dst, src []complex128) {
	if len(dst) != len(src) {
		panic("nufft: addConjRev length mismatch")
	}
	switch {
	case !useAsm:
		addConjRevGo(dst, src)
	case len(dst) == 0:
	case useAVX:
		addConjRevAVX(&dst[0], &src[len(src)-1], len(dst))
	default:
		addConjRevSSE2(&dst[0], &src[len(src)-1], len(dst))
	}
}

//go:noescape
func radix2SSE2(dst, src *complex128, s int)

// radix2Fast runs the last radix-2 stage in assembly and reports that
// it did.
func radix2Fast(dst, src []complex128, s int) bool {
	if !useAsm {
		return false
	}
	if len(src) < 2*s || len(dst) < 2*s {
		panic("nufft: FFT buffer length mismatch")
	}
	radix2SSE2(&dst[0], &src[0], s)
	return true
}
