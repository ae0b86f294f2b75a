//go:build amd64.v3

package nufft

// goFused: GOAMD64=v3 lets the compiler fuse x*y + z in the Go loops,
// which the assembly loops never do, so the two agree only to rounding.
const goFused = true
