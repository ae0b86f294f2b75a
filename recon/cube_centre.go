package recon

// centreCube moves every plane of a cube by the same whole number of pixels, cyclically, so
// that the centroid of the normalised planes' sum is nearest to the centre pixel, and returns
// the move (along the x and y indices; zero when none). x holds the planes as the optimizer
// sees them and cube the normalised ones, P planes of n × n each; both are moved.
//
// V², T3 amplitudes and closure phases are unchanged by a translation, which only multiplies
// every visibility by a phase factor (the shift theorem), so the planes drift together while
// they are fitted: SolveCube centres the gray image it starts from, but the sweeps and the
// factor search can carry the cube pixels away from the centre (2.7 pixels on a chromatic
// disc + Gaussian), so SolveCube moves it back before each set of sweeps. A common move
// keeps the planes' positions relative to one another, which the data and the spectral term
// do fix.
// Nothing is moved when a plane fits visibility phases, which fix the position, or when the
// problem holds a support or no flux normalisation (as Solve's recentre).
func centreCube(c *CubeObjective, cp CubeProblem, x, cube []float64, n int) [2]int {
	for _, t := range c.Planes {
		if !positionFree(cp.Problem, t.Obj.Use()) {
			return [2]int{}
		}
	}
	sh := centreShift(cube, n)
	if sh == [2]int{} {
		return sh
	}
	npix := n * n
	for k := range len(cube) / npix {
		shiftCyclic(x[k*npix:(k+1)*npix], n, sh)
		shiftCyclic(cube[k*npix:(k+1)*npix], n, sh)
	}
	return sh
}
