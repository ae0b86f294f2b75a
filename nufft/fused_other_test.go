//go:build !amd64.v3

package nufft

// goFused reports whether the Go loops may be compiled with fused
// multiply-adds (see fused_v3_test.go).
const goFused = false
