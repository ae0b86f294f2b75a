package nufft

import "testing"

func BenchmarkAB(b *testing.B) {
	pixel, u, v, img := benchProblem(256, 100000)
	pp, _ := NewPlan(256, 256, pixel, u, v, Options{Tol: 1e-6, Workers: 1})
	p := pp.plan
	vis := make([]complex128, len(u))
	pp.Forward(vis, img)
	p.dstC = vis
	p.srcC = vis
	b.Run("interpUnrolled", func(b *testing.B) {
		for b.Loop() {
			p.interp(0, p.m)
		}
	})
	b.Run("interpGeneric", func(b *testing.B) {
		for b.Loop() {
			for i := 0; i < p.m; i++ {
				p.interpWrap(i)
			}
		}
	})
	band := p.band[:p.bandRows[0]*p.fx]
	b.Run("spreadUnrolled", func(b *testing.B) {
		for b.Loop() {
			p.spreadUnrolled(band, p.bandLo[0], 0, p.m)
		}
	})
	b.Run("spreadGeneric", func(b *testing.B) {
		for b.Loop() {
			for i := 0; i < p.m; i++ {
				p.spreadWrap(band, p.bandLo[0], i)
			}
		}
	})
	b.Run("fwdFFT", func(b *testing.B) {
		p.srcR = img
		for b.Loop() {
			p.fwdRows(p.scratch[0], 0, p.ny)
			p.cols(p.scratch[0], 0, p.fx, false)
		}
	})
}
