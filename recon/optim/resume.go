package optim

// State is the curvature memory of a run: its correction pairs and the scale of its initial
// inverse Hessian, kept for a later run of Minimize on a related objective (Settings.Resume).
// A run that resumes from a State takes its first step along the quasi-Newton direction of
// the kept pairs, with a unit step, instead of along steepest descent with a guessed length.
// The pairs stay valid when the objective changes by a quadratic term, whose Hessian is
// constant: a pair's y = g(x+s) − g(x) then changes by nothing; for other changes they are
// an approximation the line search corrects.
//
// A State also holds the run's workspace, so that runs resuming from it allocate only their
// Result. Its zero value is an empty memory, ready to use. A State serves one run at a time.
type State struct {
	w     *workspace
	gamma float64
}

// Reset forgets the correction pairs and the scale, keeping the buffers: the next run
// resuming from st starts as one without memory. A nil st is left alone.
func (st *State) Reset() {
	if st == nil {
		return
	}
	if st.w != nil {
		st.w.k, st.w.head = 0, 0
	}
	st.gamma = 0
}

// Pairs returns the number of correction pairs held.
func (st *State) Pairs() int {
	if st == nil || st.w == nil {
		return 0
	}
	return st.w.k
}

// workspace returns the workspace of a run of n variables with m pairs: st's own, with its
// pairs, when it has those sizes; otherwise a new one, empty, that st keeps. With st nil it
// returns a new workspace.
func (st *State) workspace(n, m int) *workspace {
	if st == nil {
		return newWorkspace(n, m)
	}
	if st.w == nil || st.w.n != n || st.w.m != m {
		st.w, st.gamma = newWorkspace(n, m), 0
	}
	return st.w
}

// resume gives r the scale kept in st, unless the run's settings gave one.
func (st *State) resume(r *run) {
	if st != nil && r.gamma == 0 && st.w.k > 0 {
		r.gamma = st.gamma
	}
}

// keep stores the end of run r in st: its workspace holds the pairs already.
func (st *State) keep(r *run) {
	if st != nil {
		st.w, st.gamma = r.w, r.gamma
	}
}
