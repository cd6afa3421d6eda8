package system

import (
	"fmt"
	"math"
	"runtime"

	"fixpoint/optimize"
)

// SweepOpsPerSecond is the throughput of the sweep kernels on one worker,
// in element operations per second (see Estimate.OpsPerSweep): the
// slowest rate measured for joint models too large for the caches (10^5
// to 4·10^6 joint states) on one core of the development machine (AMD
// EPYC, 2 cores, shared), rounded down. Smaller models run faster.
const SweepOpsPerSecond = 4e8

// ParallelEfficiency is the measured speed-up per extra worker of the
// sweep on the development machine: W workers run at
// 1 + (W-1)·ParallelEfficiency times the speed of one (the kernels are
// memory-bound, so the cores share the memory bandwidth).
const ParallelEfficiency = 0.6

// RuntimeBytes is what Estimate adds to the joint-size terms of its
// memory bound: the Go runtime's own memory (text, stacks, metadata; the
// test binary's peak RSS without a model is 4.3 MiB, and a process's peak
// RSS exceeded its peak heap by at most 6.5 MiB in the measurements behind
// Estimate) and the allocations not of joint size (the components' own
// solves and the layout tables: 0.2 MiB for components of 16 states).
const RuntimeBytes = 32 << 20

// Estimate is what the joint solve of a machine is expected to need, as
// the command-line tool runs it: Separate, SeparateStart, Solve from that
// start, then EvaluateProduct of the separate policies at the same
// tolerance.
type Estimate struct {
	// States and Actions are the joint states n and joint actions.
	States, Actions float64
	// Workers is the number of sweep workers Solve runs.
	Workers int
	// Bytes is an upper bound on the memory of the steps above, in bytes:
	// every n-vector they allocate, as if none were freed, plus
	// RuntimeBytes. With K components and W workers, in bytes per joint
	// state,
	//
	//	W·(16(K-1) + 24)   per worker: K-1 product and K-1 cost vectors
	//	                   (float64), best and second best (float64), their
	//	                   actions (int32)
	//	+ 16               base costs and the iterate v
	//	+ 48               the result (Policy, RunnerUp int32; Value, Lower,
	//	                   Upper, Margin float64) and the previous lower bounds
	//	+ 8                the warm start of SeparateStart
	//	+ 64               EvaluateProduct: base and policy costs, three
	//	                   iterates, its Value, Lower and Upper.
	//
	// Bounding by the total allocated also bounds the Go collector's
	// headroom (the heap never holds more than was allocated). Reports
	// built from the result are not included.
	Bytes float64
	// OpsPerSweep is the element operations of one sweep: each node of the
	// action tree (component l, action a, below a joint prefix) costs
	// n·(2 + ρ(l,a)), ρ(l,a) the mean entries per row of that action
	// (a mode product, its cost and, at the last level, the offer), and
	// nodes of the top levels that form the sweep's tasks are computed
	// once per task; plus n·(3 + 2(W-1)) for the bounds and the merge.
	OpsPerSweep float64
	// Sweeps is an upper bound on Solve's sweeps from SeparateStart's
	// values. The span contracts at least by γ per sweep, sp(T^m v - T^(m-1) v)
	// <= γ^(m-1)·sp(Tv - v) (Puterman 1994, Theorem 6.6.2), Solve stops at
	// the first m with γ^m·sp(Tv0 - v0)/(1-γ) <= Tol/2, and one sweep
	// follows, so
	//
	//	Sweeps = min(MaxSweeps, max(1, ⌈log(Tol(1-γ)/(2 D0)) / log γ⌉)) + 1,
	//
	// where D0 bounds sp(Tv0 - v0): from the sum of the separate values
	// v0 the first update differs only through the shared costs charged
	// once instead of once per component, so D0 = (K-1)(|Shutdown| +
	// |Down|) plus a rounding allowance. Chains that mix contract faster,
	// so real counts are often several times smaller.
	Sweeps int
	// ColdSweeps is the same bound from v0 = 0 (Settings.Start nil), with
	// D0 = Σ_k sp_x(min_a c_k(x, a)) + |Shutdown| + |Down| bounding the
	// span of the cheapest one-period costs.
	ColdSweeps int
	// EvaluateOps and EvaluateSweeps are the element operations of one
	// sweep of EvaluateProduct, n·(3 + Σ_k (1 + ρ_k)) with ρ_k the largest
	// mean row length of component k, and the bound above with its stop
	// rule γ^m·D0/(1-γ) <= Tol.
	EvaluateOps    float64
	EvaluateSweeps int
	// Seconds is the expected time of Solve and EvaluateProduct:
	//
	//	OpsPerSweep·Sweeps / (SweepOpsPerSecond·(1 + (W'-1)·ParallelEfficiency))
	//	+ EvaluateOps·EvaluateSweeps / SweepOpsPerSecond,
	//
	// with W' = min(W, GOMAXPROCS). It is an estimate for a machine like
	// the development machine, and an upper bound there in the sweep count.
	Seconds float64
}

// Estimate returns what solving the machine with settings s (nil for the
// defaults) is expected to need (see Estimate's fields for the formulas),
// without allocating anything of the joint size. It returns the faults
// of Validate for an invalid machine.
func (sys *Machine) Estimate(s *Settings) (Estimate, error) {
	if err := sys.Validate(); err != nil {
		return Estimate{}, err
	}
	j := newJointLayout(sys)
	set := s.withDefaults(j)
	n, acts := sys.Size()
	k := j.k
	w := float64(set.Workers)
	e := Estimate{States: n, Actions: acts, Workers: set.Workers}
	e.Bytes = n*(w*sweepStateBytes(k)+16+48+8+64) + RuntimeBytes

	// rho[l][a] is the mean row length of component l's action a.
	rho := make([][]float64, k)
	for l, c := range sys.Components {
		rho[l] = make([]float64, j.acts[l])
		for a, act := range c.Model.Actions {
			nnz := 0
			for x, row := range act.Rows {
				if act.Passive && c.Model.States[x].Unsafe {
					continue
				}
				nnz += len(row)
			}
			rho[l][a] = float64(nnz) / float64(j.dims[l])
		}
	}
	d, tasks := j.taskDepth(set.Workers)
	prefixes := 1.0 // joint prefixes of the levels above l
	for l := range k {
		times := prefixes // computations of each node of level l
		if l < d {
			times = float64(tasks) / float64(j.acts[l])
		}
		for a := range j.acts[l] {
			e.OpsPerSweep += times * n * (2 + rho[l][a])
		}
		prefixes *= float64(j.acts[l])
	}
	e.OpsPerSweep += n * (3 + 2*(w-1))

	g := sys.Discount.Factor()
	shared := math.Abs(sys.Shutdown) + math.Abs(sys.Down)
	cmax, cold := shared, shared
	for _, c := range sys.Components {
		lo, hi, top := math.Inf(1), math.Inf(-1), 0.0
		for x := range c.Model.States {
			cheapest := math.Inf(1)
			for a, act := range c.Model.Actions {
				if !act.Admissible(x) || (act.Passive && c.Model.States[x].Unsafe) {
					continue
				}
				cost := c.Costs.Running[x] + c.Costs.Action[a][x]
				cheapest = min(cheapest, cost)
				top = max(top, math.Abs(cost))
			}
			lo, hi = min(lo, cheapest), max(hi, cheapest)
		}
		cold += hi - lo
		cmax += top
	}
	// Rounding allowance: the separate values carry relative errors of a
	// few ulps of the value scale cmax/(1-γ).
	round := 64 * 0x1p-52 * cmax / (1 - g)
	warm := float64(k-1)*shared + round
	e.Sweeps = sweepBound(g, set.Tol/2, warm, set.MaxSweeps) + 1
	e.ColdSweeps = sweepBound(g, set.Tol/2, cold+round, set.MaxSweeps) + 1
	for l := range k {
		e.EvaluateOps += n * (1 + maxOf(rho[l]))
	}
	e.EvaluateOps += 3 * n
	e.EvaluateSweeps = sweepBound(g, set.Tol, warm, optimize.DefaultValueSweeps)

	eff := 1 + float64(min(set.Workers, runtime.GOMAXPROCS(0))-1)*ParallelEfficiency
	e.Seconds = e.OpsPerSweep*float64(e.Sweeps)/(SweepOpsPerSecond*eff) + e.EvaluateOps*float64(e.EvaluateSweeps)/SweepOpsPerSecond
	return e, nil
}

// sweepBound returns the first m >= 1 with γ^m·d0/(1-γ) <= stop, at most
// cap: the sweeps after which a span that starts at d0 and contracts by γ
// meets the stop rule.
func sweepBound(g, stop, d0 float64, cap int) int {
	if d0 <= 0 {
		return 1
	}
	m := math.Ceil(math.Log(stop*(1-g)/d0) / math.Log(g))
	if math.IsNaN(m) || m < 1 {
		return 1
	}
	return int(min(m, float64(cap)))
}

func maxOf(xs []float64) float64 {
	m := math.Inf(-1)
	for _, x := range xs {
		m = max(m, x)
	}
	return m
}

// LimitError reports an estimate above a limit set by the caller;
// MaxBytes or MaxSeconds is zero when that limit was not set.
type LimitError struct {
	Estimate             Estimate
	MaxBytes, MaxSeconds float64
}

func (e *LimitError) Error() string {
	est := e.Estimate
	var over string
	switch {
	case e.MaxBytes > 0 && est.Bytes > e.MaxBytes && e.MaxSeconds > 0 && est.Seconds > e.MaxSeconds:
		over = fmt.Sprintf("memory limit %.1f GiB and time limit %s", e.MaxBytes/(1<<30), duration(e.MaxSeconds))
	case e.MaxBytes > 0 && est.Bytes > e.MaxBytes:
		over = fmt.Sprintf("memory limit %.1f GiB", e.MaxBytes/(1<<30))
	default:
		over = fmt.Sprintf("time limit %s", duration(e.MaxSeconds))
	}
	return fmt.Sprintf("system: the joint solve of %.0f states and %.0f actions needs up to %.1f GiB of memory and about %s (at most %d sweeps on %d workers), over the %s",
		est.States, est.Actions, est.Bytes/(1<<30), duration(est.Seconds), est.Sweeps, est.Workers, over)
}

// duration formats seconds for messages: "40 s", "12.5 min", "3.2 h".
func duration(s float64) string {
	switch {
	case s >= 3600:
		return fmt.Sprintf("%.1f h", s/3600)
	case s >= 60:
		return fmt.Sprintf("%.1f min", s/60)
	}
	return fmt.Sprintf("%.0f s", s)
}

// Check returns a *LimitError when the estimate exceeds maxBytes of
// memory or maxSeconds of time, and nil otherwise; a limit <= 0 is not
// checked.
func (e Estimate) Check(maxBytes, maxSeconds float64) error {
	if (maxBytes > 0 && e.Bytes > maxBytes) || (maxSeconds > 0 && e.Seconds > maxSeconds) {
		return &LimitError{Estimate: e, MaxBytes: max(maxBytes, 0), MaxSeconds: max(maxSeconds, 0)}
	}
	return nil
}
