package nufft

// conjRevGo is the portable form of conjRev.
func conjRevGo(dst, src []complex128) {
	n := len(src) - 1
	for j := range dst {
		v := src[n-j]
		dst[j] = complex(real(v), -imag(v))
	}
}

// addConjRevGo is the portable form of addConjRev.
func addConjRevGo(dst, src []complex128) {
	n := len(src) - 1
	for j := range dst {
		v := src[n-j]
		dst[j] += complex(real(v), -imag(v))
	}
}
