package model

import "math"

// besselLambda returns the normalised Bessel function
//
//	Λ_ν(z) = Γ(ν+1) (2/z)^ν J_ν(z),   Λ_ν(0) = 1,
//
// for a real order 0 ≤ ν ≤ maxOrder and z ≥ 0. It is the visibility of the
// power-law limb-darkened disc, V(z) = Λ_ν(z) with ν = α/2 + 1 (Hestroffer
// 1997, A&A 327, 199, eq. 10), and Λ_1(z) = 2 J_1(z)/z is the uniform disc.
//
// Three regimes are used; their agreement at the boundaries is tested:
//   - z < 8: the ascending series Λ_ν(z) = Σ_k (−z²/4)^k / (k! (ν+1)_k)
//     (Abramowitz & Stegun 1964, eq. 9.1.10). Its largest term is below
//     about 120, so the absolute rounding error stays below 1e-13.
//   - 8 ≤ z < 500: Miller's backward recurrence J_{μ−1} = (2μ/z) J_μ − J_{μ+1}
//     (A&S eq. 9.1.27) over the orders f, f+1, …, with ν = n + f and
//     0 ≤ f < 1, normalised by the Neumann series
//     (z/2)^f = Σ_k (f+2k) Γ(f+k)/k! J_{f+2k}(z) (Neumann's expansion,
//     Watson 1944, Theory of Bessel Functions, sect. 5.2, from memory;
//     the tests check it against math.Jn and closed forms). The ratios
//     of the recurrence values are exact to rounding once the start order
//     exceeds z by a margin (Miller's algorithm, A&S sect. 9.12, ex. 1).
//   - z ≥ 500: Hankel's asymptotic expansion (A&S eqs. 9.2.5, 9.2.9, 9.2.10),
//     whose terms keep falling until k ≈ 2z, far beyond the needed accuracy.
func besselLambda(nu, z float64) float64 {
	switch {
	case z < 0:
		z = -z
	case z == 0:
		return 1
	}
	if z < 8 {
		return lambdaSeries(nu, z)
	}
	if z >= 500 {
		return math.Exp(lgam(nu+1)+nu*math.Log(2/z)) * besselJAsymptotic(nu, z)
	}
	return lambdaMiller(nu, z)
}

// maxOrder bounds the Bessel order accepted by besselLambda; it keeps the
// recurrence buffer of lambdaMiller a fixed-size array and the asymptotic
// expansion valid at z ≥ 500 (which needs z ≫ ν²/2).
const maxOrder = 20

func lgam(x float64) float64 {
	v, _ := math.Lgamma(x)
	return v
}

// lambdaSeries sums the ascending series of Λ_ν(z) until the terms no
// longer change the sum.
func lambdaSeries(nu, z float64) float64 {
	q := -z * z / 4
	term, sum := 1.0, 1.0
	for k := 1; k < 200; k++ {
		term *= q / (float64(k) * (nu + float64(k)))
		sum += term
		if math.Abs(term) < 1e-17*math.Abs(sum) && float64(k) > z/2 {
			break
		}
	}
	return sum
}

// lambdaMiller evaluates Λ_ν(z) for 8 ≤ z < 500 by backward recurrence.
func lambdaMiller(nu, z float64) float64 {
	n := int(math.Floor(nu))
	f := nu - float64(n)
	top := math.Max(float64(n), z)
	start := int(top + 20 + math.Sqrt(40*top))
	var p [800]float64
	if start >= len(p)-1 {
		panic("model: Bessel recurrence start order too large")
	}
	// p[m] is proportional to J_{f+m}(z).
	p[start+1] = 0
	p[start] = 1e-30
	for m := start; m > 0; m-- {
		p[m-1] = 2*(f+float64(m))/z*p[m] - p[m+1]
		if math.Abs(p[m-1]) > 1e250 {
			for i := m - 1; i <= start; i++ {
				p[i] *= 1e-250
			}
		}
	}
	// Neumann normalisation: S = Σ_k (f+2k) Γ(f+k)/k! p[2k] equals
	// (z/2)^f times the common scale of p.
	s := math.Gamma(f+1) * p[0]
	a := math.Gamma(f + 1) // a_k = Γ(f+k)/k!, starting at k = 1
	for k := 1; 2*k <= start; k++ {
		if k > 1 {
			a *= (f + float64(k) - 1) / float64(k)
		}
		s += (f + 2*float64(k)) * a * p[2*k]
	}
	// J_ν = p[n] (z/2)^f / S, hence Λ_ν = Γ(ν+1) (2/z)^n p[n] / S.
	return math.Exp(lgam(nu+1)+float64(n)*math.Log(2/z)) * p[n] / s
}

// besselJAsymptotic returns J_ν(z) from Hankel's expansion, for z ≫ ν².
func besselJAsymptotic(nu, z float64) float64 {
	mu := 4 * nu * nu
	var pSum, qSum float64
	term := 1.0 // a_k(ν)/z^k
	for k := 0; k < 60; k++ {
		switch k % 4 {
		case 0:
			pSum += term
		case 1:
			qSum += term
		case 2:
			pSum -= term
		case 3:
			qSum -= term
		}
		odd := float64(2*k + 1)
		next := term * (mu - odd*odd) / (float64(k+1) * 8 * z)
		if math.Abs(next) < 1e-17 || math.Abs(next) > math.Abs(term) {
			break
		}
		term = next
	}
	w := z - (nu/2+0.25)*math.Pi
	return math.Sqrt(2/(math.Pi*z)) * (pSum*math.Cos(w) - qSum*math.Sin(w))
}
