package recon

// divide sets dst[i] = src[i]/d, the normalisation of an image by its flux. Each quotient is
// the correctly rounded division, whether four at a time in assembly or one at a time here,
// so the bits do not depend on the form: a division is several times slower than a
// multiplication, and a multiplication by 1/d would round twice. dst may be src.
func divide(dst, src []float64, d float64) {
	dst = dst[:len(src)]
	i := 0
	if hasPixelAVX {
		i = len(src) &^ 3
		if i > 0 {
			divideAVX(dst, src, d)
		}
	}
	for ; i < len(src); i++ {
		dst[i] = src[i] / d
	}
}
