package system

import (
	"context"
	"math"
	"sync"

	"fixpoint/condition"
)

// pollEvery is the number of joint-state updates a loop makes between two
// looks at its context. A look is an atomic load; 2^14 updates take 10 to
// 100 µs, so a cancelled solve stops within milliseconds on any size and
// the looks cost nothing measurable.
const pollEvery = 1 << 14

// poll counts the work of one goroutine and looks at its context every
// pollEvery units.
type poll struct {
	ctx  context.Context
	done int
}

// add counts units of work and returns the context's error, looking at
// it only when pollEvery units have passed since the last look.
func (p *poll) add(units int) error {
	p.done += units
	if p.done < pollEvery {
		return nil
	}
	p.done = 0
	return p.ctx.Err()
}

// joint holds the precomputed layout of a system.
type joint struct {
	sys     *Machine
	k       int
	dims    []int // states per component
	strides []int // state strides
	acts    []int // actions per component
	aStride []int // action strides
	n       int
	nActs   int
	passive []int
	// base[s] = Σ_k running_k(x_k) + Down·[some x_k unsafe] (when DownOnUnsafe).
	base []float64
	// acost[k][a][x] is component k's action cost, +Inf where inadmissible.
	acost [][][]float64
	// rows[k][a][x] is component k's row, nil where inadmissible.
	rows [][][][]condition.Entry
}

// newJointLayout computes only the strides of a system (cheap).
func newJointLayout(sys *Machine) *joint {
	j := &joint{sys: sys, k: len(sys.Components), n: 1, nActs: 1}
	for _, c := range sys.Components {
		j.dims = append(j.dims, len(c.Model.States))
		j.acts = append(j.acts, len(c.Model.Actions))
	}
	j.strides = make([]int, j.k)
	j.aStride = make([]int, j.k)
	for i := j.k - 1; i >= 0; i-- {
		j.strides[i], j.aStride[i] = j.n, j.nActs
		j.n *= j.dims[i]
		j.nActs *= j.acts[i]
	}
	return j
}

// newJoint precomputes the layout, costs and rows of a valid system;
// O(n·K), cancellable.
func newJoint(ctx context.Context, sys *Machine) (*joint, error) {
	j := newJointLayout(sys)
	for _, c := range sys.Components {
		j.passive = append(j.passive, c.Model.Passive())
	}
	j.acost = make([][][]float64, j.k)
	j.rows = make([][][][]condition.Entry, j.k)
	for i, c := range sys.Components {
		m := c.Model
		j.acost[i] = make([][]float64, j.acts[i])
		j.rows[i] = make([][][]condition.Entry, j.acts[i])
		for a := range m.Actions {
			j.acost[i][a] = make([]float64, j.dims[i])
			j.rows[i][a] = make([][]condition.Entry, j.dims[i])
			for x := range m.States {
				if !m.Actions[a].Admissible(x) || (m.Actions[a].Passive && m.States[x].Unsafe) {
					j.acost[i][a][x] = math.Inf(1)
					continue
				}
				j.acost[i][a][x] = c.Costs.Action[a][x]
				j.rows[i][a][x] = m.Actions[a].Rows[x]
			}
		}
	}
	j.base = make([]float64, j.n)
	err := j.eachState(ctx, func(s int, xs []int) {
		down := false
		for i, c := range sys.Components {
			j.base[s] += c.Costs.Running[xs[i]]
			down = down || c.Model.States[xs[i]].Unsafe
		}
		if down && sys.DownOnUnsafe {
			j.base[s] += sys.Down
		}
	})
	return j, err
}

// eachState calls f for every joint state s in increasing order with its
// component conditions xs (an odometer, no divisions; f must not keep xs),
// looking at ctx every pollEvery states.
func (j *joint) eachState(ctx context.Context, f func(s int, xs []int)) error {
	xs := make([]int, j.k)
	p := poll{ctx: ctx}
	for s := range j.n {
		f(s, xs)
		for i := j.k - 1; i >= 0; i-- {
			if xs[i]++; xs[i] < j.dims[i] {
				break
			}
			xs[i] = 0
		}
		if err := p.add(1); err != nil {
			return err
		}
	}
	return ctx.Err()
}

func (j *joint) coord(s, i int) int { return s / j.strides[i] % j.dims[i] }

func (j *joint) actionOf(a, i int) int { return a / j.aStride[i] % j.acts[i] }

// worked reports whether joint action a works on some component.
func (j *joint) worked(a int) bool {
	for i := range j.k {
		if j.actionOf(a, i) != j.passive[i] {
			return true
		}
	}
	return false
}

// modeProduct sets out = (I ⊗ .. ⊗ P ⊗ .. ⊗ I) in along mode i with the
// rows of component i's action a: out[l, x, r] = Σ_y P(y | x) in[l, y, r];
// rows that are nil give zeros. O(n · (1 + nnz/dims[i])).
func (j *joint) modeProduct(p *poll, out, in []float64, i int, rows [][]condition.Entry) error {
	r := j.strides[i]
	block := r * j.dims[i]
	for l := 0; l < j.n; l += block {
		for x, row := range rows {
			dst := out[l+x*r : l+x*r+r]
			clear(dst)
			for _, e := range row {
				src := in[l+e.To*r : l+e.To*r+r]
				pr := e.P
				for t := range dst {
					dst[t] += pr * src[t]
				}
			}
			if err := p.add(r); err != nil {
				return err
			}
		}
	}
	return nil
}

// addCost sets out = in + broadcast of component i's cost of action a. O(n).
func (j *joint) addCost(p *poll, out, in []float64, i, a int) error {
	r := j.strides[i]
	block := r * j.dims[i]
	cost := j.acost[i][a]
	for l := 0; l < j.n; l += block {
		for x, c := range cost {
			base := l + x*r
			for t := range r {
				out[base+t] = in[base+t] + c
			}
			if err := p.add(r); err != nil {
				return err
			}
		}
	}
	return nil
}

// sweepState is the per-worker state of a Bellman sweep: for every joint
// state the best and second-best Q-values and their joint actions, and
// the worker's product and cost vectors of levels 1..K-1 of the action
// tree (level 0 reads v and base, shared; level K is fused into leaf).
type sweepState struct {
	best, second []float64
	arg, arg2    []int32
	bufs, costs  [][]float64
	poll         poll
}

// Per-worker memory, in bytes per joint state, of a sweepState of a
// machine of k components: 2(k-1) vectors of float64, best and second,
// arg and arg2.
func sweepStateBytes(k int) float64 { return float64(16*(k-1) + 16 + 8) }

func (j *joint) newSweepState() *sweepState {
	st := &sweepState{best: make([]float64, j.n), second: make([]float64, j.n),
		arg: make([]int32, j.n), arg2: make([]int32, j.n),
		bufs: make([][]float64, j.k), costs: make([][]float64, j.k)}
	for level := 1; level < j.k; level++ {
		st.bufs[level] = make([]float64, j.n)
		st.costs[level] = make([]float64, j.n)
	}
	return st
}

func (st *sweepState) reset() {
	for s := range st.best {
		st.best[s], st.second[s] = math.Inf(1), math.Inf(1)
		st.arg[s], st.arg2[s] = -1, -1
	}
}

// better orders (q, a) pairs: smaller Q first, then smaller action index,
// so that merging workers is deterministic.
func better(q float64, a int32, bq float64, ba int32) bool {
	return q < bq || (q == bq && a < ba)
}

func (st *sweepState) offer(s int, q float64, a int32) {
	switch {
	case better(q, a, st.best[s], st.arg[s]) || st.arg[s] < 0:
		st.second[s], st.arg2[s] = st.best[s], st.arg[s]
		st.best[s], st.arg[s] = q, a
	case better(q, a, st.second[s], st.arg2[s]) || st.arg2[s] < 0:
		st.second[s], st.arg2[s] = q, a
	}
}

// leaf offers, for the last component's actions lo..hi-1 after the joint
// action prefix of the others, the Q-values
//
//	Q(s) = cost(s) + c_K(a, x_K) + Shutdown·[worked] + γ Σ_y P_K(y | x_K, a) in(s: x_K → y),
//
// fusing the last mode product, its cost and the offer in one pass:
// O(n · (1 + nnz/dims[K-1])) per action.
func (j *joint) leaf(st *sweepState, in, cost []float64, prefix, lo, hi int) error {
	i := j.k - 1
	g := j.sys.Discount.Factor()
	dim := j.dims[i]
	for a := lo; a < hi; a++ {
		ja := prefix + a*j.aStride[i]
		extra := 0.0
		if j.worked(ja) {
			extra = j.sys.Shutdown
		}
		rows, acost := j.rows[i][a], j.acost[i][a]
		for l := 0; l < j.n; l += dim {
			for x, row := range rows {
				if row == nil {
					continue
				}
				w := 0.0
				for _, e := range row {
					w += e.P * in[l+e.To]
				}
				s := l + x
				if q := cost[s] + acost[x] + extra + g*w; q < math.Inf(1) {
					st.offer(s, q, int32(ja))
				}
			}
			if err := st.poll.add(dim); err != nil {
				return err
			}
		}
	}
	return nil
}

// step applies component level's action a to the level's vectors: the
// product and cost vectors of level+1.
func (j *joint) step(st *sweepState, in, cost []float64, level, a int) error {
	if err := j.modeProduct(&st.poll, st.bufs[level+1], in, level, j.rows[level][a]); err != nil {
		return err
	}
	return j.addCost(&st.poll, st.costs[level+1], cost, level, a)
}

// descend walks the action tree below level depth first, from the
// worker's vectors of that level, and offers every completed joint
// action's Q-values. prefix is the joint action index so far.
func (j *joint) descend(st *sweepState, level, prefix int) error {
	if level == j.k-1 {
		return j.leaf(st, st.bufs[level], st.costs[level], prefix, 0, j.acts[level])
	}
	for a := range j.acts[level] {
		if err := j.step(st, st.bufs[level], st.costs[level], level, a); err != nil {
			return err
		}
		if err := j.descend(st, level+1, prefix+a*j.aStride[level]); err != nil {
			return err
		}
	}
	return nil
}

// taskDepth returns the number d of top levels of the action tree whose
// joint prefixes are the sweep's tasks, and their number Π_{l<d} m_l: the
// fewest levels giving at least four tasks per worker, and at most K-1
// levels (the last level stays inside a task) unless K = 1.
func (j *joint) taskDepth(workers int) (d, tasks int) {
	d, tasks = 1, j.acts[0]
	for d < j.k-1 && tasks < 4*workers {
		tasks *= j.acts[d]
		d++
	}
	return d, tasks
}

// runTask computes the subtree of the action tree under task t, the
// joint prefix of the first d levels in mixed radix (level 0 most
// significant): it recomputes the prefix's products from v and base,
// then descends.
func (j *joint) runTask(st *sweepState, v []float64, t, d int) error {
	in, cost := v, j.base
	prefix, radix := 0, 1
	for level := d - 1; level > 0; level-- {
		radix *= j.acts[level]
	}
	for level := range d {
		a := t / radix % j.acts[level]
		if level+1 < d {
			radix /= j.acts[level+1]
		}
		if level == j.k-1 {
			return j.leaf(st, in, cost, prefix, a, a+1)
		}
		if err := j.step(st, in, cost, level, a); err != nil {
			return err
		}
		in, cost = st.bufs[level+1], st.costs[level+1]
		prefix += a * j.aStride[level]
	}
	return j.descend(st, d, prefix)
}

// sweep computes (T v)(s) for every joint state, with the greedy joint
// action and the runner-up: the action tree's top d levels are split into
// tasks (taskDepth) that the workers take from a queue. The result is in
// states[0]; it does not depend on the number of workers (ties go to the
// lowest joint action index). Every kernel looks at ctx every pollEvery
// joint-state updates, so a cancelled sweep returns ctx's error within
// milliseconds.
func (j *joint) sweep(ctx context.Context, v []float64, states []*sweepState) error {
	d, tasks := j.taskDepth(len(states))
	next := make(chan int, tasks)
	for t := range tasks {
		next <- t
	}
	close(next)
	errs := make([]error, len(states))
	var wg sync.WaitGroup
	for w, st := range states {
		st.poll = poll{ctx: ctx}
		wg.Go(func() {
			st.reset()
			for t := range next {
				if errs[w] = j.runTask(st, v, t, d); errs[w] != nil {
					return
				}
			}
		})
	}
	wg.Wait()
	for _, err := range errs {
		if err != nil {
			return err
		}
	}
	out := states[0]
	for _, st := range states[1:] {
		for s := range j.n {
			if st.arg[s] >= 0 {
				out.offer(s, st.best[s], st.arg[s])
			}
			if st.arg2[s] >= 0 {
				out.offer(s, st.second[s], st.arg2[s])
			}
			if err := out.poll.add(1); err != nil {
				return err
			}
		}
	}
	return ctx.Err()
}
