package model

import (
	"math"
	"testing"
)

// TestBesselLambdaIntegerOrders compares Λ_n(z) = n! (2/z)^n J_n(z) with
// the standard library's J0, J1 and Jn across all three regimes.
func TestBesselLambdaIntegerOrders(t *testing.T) {
	for _, n := range []int{0, 1, 2, 3, 5} {
		for _, z := range []float64{1e-3, 0.5, 2, 5, 7.99, 8, 8.01, 15, 40, 120, 499.9, 500, 700} {
			want := math.Exp(lgam(float64(n)+1)+float64(n)*math.Log(2/z)) * math.Jn(n, z)
			got := besselLambda(float64(n), z)
			// Absolute error relative to the envelope (2/z)^(n+1/2), the
			// size of Λ_n's oscillation at large z (A&S eq. 9.2.1).
			env := math.Min(1, math.Exp(lgam(float64(n)+1)+float64(n)*math.Log(2/z))*math.Sqrt(2/(math.Pi*z)))
			if math.Abs(got-want) > 1e-12*env+1e-15 {
				t.Errorf("Λ_%d(%g) = %.16g, math.Jn gives %.16g", n, z, got, want)
			}
		}
	}
}

// TestBesselLambdaHalfOrders checks ν = 3/2 and 5/2 against the closed
// forms of the spherical Bessel functions, J_{k+1/2}(z) = √(2z/π) j_k(z)
// with j1 = sin z/z² − cos z/z and j2 = (3/z³ − 1/z) sin z − 3 cos z/z²
// (A&S eqs. 10.1.1, 10.1.11). Hence Λ_{3/2} = 3 j1(z)/z and
// Λ_{5/2} = 15 j2(z)/z².
func TestBesselLambdaHalfOrders(t *testing.T) {
	for _, z := range []float64{0.3, 1, 3, 7.9, 8.1, 20, 75, 300, 600} {
		s, c := math.Sincos(z)
		j1 := s/(z*z) - c/z
		j2 := (3/(z*z*z)-1/z)*s - 3*c/(z*z)
		if got, want := besselLambda(1.5, z), 3*j1/z; math.Abs(got-want) > 1e-13 {
			t.Errorf("Λ_1.5(%g) = %.16g, want %.16g", z, got, want)
		}
		// The closed form of j2 cancels badly below z = 1, so it is not a
		// reference there.
		if got, want := besselLambda(2.5, z), 15*j2/(z*z); z >= 1 && math.Abs(got-want) > 1e-13 {
			t.Errorf("Λ_2.5(%g) = %.16g, want %.16g", z, got, want)
		}
	}
}

// TestBesselLambdaContinuity checks that non-integer orders agree across
// the switch from series to recurrence (z = 8) and from recurrence to the
// asymptotic expansion (z = 500), where the regimes compute independently.
func TestBesselLambdaContinuity(t *testing.T) {
	for _, nu := range []float64{1.1, 1.37, 1.8, 2.25, 4.6} {
		for _, z := range []float64{8, 500} {
			var a, b float64
			if z == 8 {
				a, b = lambdaSeries(nu, z), lambdaMiller(nu, z)
			} else {
				a = lambdaMiller(nu, z-1e-9)
				b = math.Exp(lgam(nu+1)+nu*math.Log(2/z)) * besselJAsymptotic(nu, z)
			}
			if math.Abs(a-b) > 1e-13 {
				t.Errorf("ν=%g z=%g: regimes differ: %.16g vs %.16g", nu, z, a, b)
			}
		}
	}
}

func BenchmarkBesselLambda(b *testing.B) {
	for _, z := range []float64{3, 30} {
		b.Run(map[float64]string{3: "z=3", 30: "z=30"}[z], func(b *testing.B) {
			b.ReportAllocs()
			var s float64
			for i := 0; i < b.N; i++ {
				s += besselLambda(1.3, z)
			}
			_ = s
		})
	}
}
