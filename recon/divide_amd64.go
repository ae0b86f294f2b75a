//go:build !purego

package recon

// divideAVX sets dst[i] = src[i]/d for the first len(src) &^ 3 elements (divide_amd64.s);
// len(dst) >= len(src).
//
//go:noescape
func divideAVX(dst, src []float64, d float64)

// gradRegAVX sets out[i] = (s_i·adj[i] − cm)·inv + sc·(r[i] − c) + add, s_i = s0·(−1)^i, for
// the first len(adj) &^ 3 elements (divide_amd64.s); out and r are at least as long as adj.
//
//go:noescape
func gradRegAVX(out, adj, r []float64, s0, cm, inv, sc, c, add float64)

// hasPixelAVX reports whether the pixel loops (divide, the gradient's last pass) have their
// assembly form on this processor.
var hasPixelAVX = cpuHasAVX()
