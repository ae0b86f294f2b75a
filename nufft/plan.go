package nufft

// Plan is the fast transform. (Temporary: evaluates by direct sum until
// the gridding implementation lands.)
type Plan struct {
	*Exact
}

// NewPlan makes a fast transform for an nx×ny image with the given pixel
// size (radians) and points (u, v) in cycles per radian.
func NewPlan(nx, ny int, pixel float64, u, v []float64, opt Options) (*Plan, error) {
	e, err := NewExact(nx, ny, pixel, u, v, opt)
	if err != nil {
		return nil, err
	}
	return &Plan{e}, nil
}
