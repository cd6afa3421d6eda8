package robust

import (
	"cmp"
	"fmt"
	"math"
	"slices"

	"fixpoint/optimize"
)

// model is a Problem with its sets, flattened for the sweeps. Choices are
// numbered over all states in order: state s owns choices
// first[s]..first[s+1]-1, and choice c owns entries off[c]..off[c+1]-1 of
// to (the support, increasing) and center (the nominal row, 0 at widened
// targets).
type model struct {
	p      *optimize.Problem
	kind   Kind
	gamma  float64
	first  []int
	action []int
	cost   []float64
	radius []float64
	off    []int
	to     []int
	center []float64
	// adv holds, per entry, the last worst row found for each choice: the
	// warm start of the adversary's policy iteration.
	adv []float64
	// order (L1) keeps each row's entries sorted by value from the last
	// call, so that re-sorting after a small change of the values is
	// nearly linear; dual (KL) keeps each row's last dual point t.
	order []int32
	dual  []float64
	// eps is the target gap of each KL inner problem, in currency units.
	eps float64
	// evaluations counts the chain solves of the current solve.
	evaluations int
	// maxLen is the longest support; scratch, gs and xs are buffers of
	// that length.
	maxLen          int
	scratch, gs, xs []float64
}

// newModel flattens p and its sets, after checking that they match.
func newModel(p *optimize.Problem, sets *Sets) (*model, error) {
	if err := p.Validate(true); err != nil {
		return nil, err
	}
	if sets == nil || len(sets.Rows) != len(p.States) {
		return nil, fmt.Errorf("robust: sets do not belong to this problem")
	}
	m := &model{p: p, kind: sets.Kind, gamma: p.Discount, first: make([]int, len(p.States)+1)}
	for s, cs := range p.Choices {
		if len(sets.Rows[s]) != len(cs) {
			return nil, fmt.Errorf("robust: sets do not belong to this problem: state %d has %d choices and %d sets", s, len(cs), len(sets.Rows[s]))
		}
		m.first[s] = len(m.action)
		for k, c := range cs {
			row := &sets.Rows[s][k]
			if row.Action != c.Action || row.State != s {
				return nil, fmt.Errorf("robust: sets do not belong to this problem: state %d, choice %d", s, k)
			}
			m.action = append(m.action, c.Action)
			m.cost = append(m.cost, c.Cost)
			m.radius = append(m.radius, row.Radius)
			m.off = append(m.off, len(m.to))
			start := len(m.to)
			m.to = append(m.to, row.Support...)
			m.center = append(m.center, make([]float64, len(row.Support))...)
			for _, e := range c.Next {
				if e.P <= 0 {
					continue
				}
				i, found := slices.BinarySearch(m.to[start:], e.To)
				if !found {
					return nil, fmt.Errorf("robust: sets do not belong to this problem: state %d, action %d: target %d outside the support", s, c.Action, e.To)
				}
				m.center[start+i] += e.P
			}
			m.maxLen = max(m.maxLen, len(row.Support))
		}
	}
	m.first[len(p.States)] = len(m.action)
	m.off = append(m.off, len(m.to))
	m.adv = slices.Clone(m.center)
	m.order = make([]int32, len(m.to))
	for c := range m.action {
		for i := range m.off[c+1] - m.off[c] {
			m.order[m.off[c]+i] = int32(i)
		}
	}
	m.dual = make([]float64, len(m.action))
	m.scratch = make([]float64, m.maxLen)
	m.gs = make([]float64, m.maxLen)
	m.xs = make([]float64, m.maxLen)
	return m, nil
}

// inner returns bounds lo <= σ <= hi on the inner problem of choice c at
// the values v, σ = max { Σ_j q_j v_j : q in the set of c }, and writes a
// row q of the set (on the choice's support) with Σ q_j v_j = lo into q,
// or into scratch when q is nil. For L1, lo = hi up to rounding.
func (m *model) inner(c int, v, q []float64) (lo, hi float64) {
	off, end := m.off[c], m.off[c+1]
	if q == nil {
		q = m.scratch[:end-off]
	}
	if m.kind == KL {
		return m.kl(c, v, q)
	}
	s := m.l1(c, v, q)
	return s, s
}

// l1 is the L1 inner problem: maximise q·v over the simplex on the
// support with ‖q - p̂‖₁ <= r. Sort and shift: with j* a support state of
// largest value, move δ = min(r/2, 1 - p̂_j*) to j*, taken from the
// support states of lowest value first. It is optimal: any feasible q
// moves at most r/2 of mass (the L1 distance counts each moved unit twice),
// the best place to put moved mass is j*, and the cheapest mass to give up
// is the lowest-valued (an exchange argument; the LP of the inner problem
// has this vertex as a solution; cf. Iyengar 2005, §4, and Nilim & El
// Ghaoui 2005, §5, for the general polyhedral case). O(k log k) for a row
// of k support states: the sort, which is nearly linear when the values
// changed little since the last call (insertion sort for k <= 32).
func (m *model) l1(c int, v, q []float64) float64 {
	off, end := m.off[c], m.off[c+1]
	to, p := m.to[off:end], m.center[off:end]
	copy(q, p)
	if r := m.radius[c]; r > 0 && len(to) > 1 {
		ord := m.order[off:end]
		// A total order (value, then target index) makes the worst row
		// independent of the order left by the last call.
		less := func(a, b int32) int {
			if x := cmp.Compare(v[to[a]], v[to[b]]); x != 0 {
				return x
			}
			return cmp.Compare(a, b)
		}
		if len(ord) <= 32 {
			for i := 1; i < len(ord); i++ {
				x := ord[i]
				j := i
				for j > 0 && less(ord[j-1], x) > 0 {
					ord[j] = ord[j-1]
					j--
				}
				ord[j] = x
			}
		} else {
			slices.SortFunc(ord, less)
		}
		top := ord[len(ord)-1]
		delta := min(r/2, 1-p[top])
		q[top] += delta
		left := delta
		for _, i := range ord[:len(ord)-1] {
			if left <= 0 {
				break
			}
			take := min(q[i], left)
			q[i] -= take
			left -= take
		}
	}
	s := 0.0
	for i, j := range to {
		s += q[i] * v[j]
	}
	return s
}

// timesExpm1 returns t·(e^y - 1) for t > 0 without overflow in e^y.
func timesExpm1(t, y float64) float64 {
	if y < 1 {
		return t * math.Expm1(y)
	}
	return math.Exp(math.Log(t)+y) - t
}

// maxNewton caps the dual iterations of one KL inner problem; Newton's
// method from a warm start needs one to three.
const maxNewton = 100

// kl is the KL inner problem: maximise q·v over the simplex on the support
// with KL(p̂‖q) = Σ_j p̂_j ln(p̂_j/q_j) <= r. Nilim & El Ghaoui (2005, §4)
// reduce it to one dimension; in the shifted variable t = μ - max v (our
// derivation of their dual), with g_j = max v - v_j >= 0 and sums over the
// entries with p̂_j > 0,
//
//	σ = max v + min_{t >= 0} Φ(t),   Φ(t) = t - e^(-r)·G(t),   G(t) = Π_j (t + g_j)^p̂_j,
//
// Φ convex (G is a weighted geometric mean of affine functions, so
// concave). For any t, max v + Φ(t) >= σ (weak duality); and where
// Z(t) = e^(-r)·G(t)·Σ_j p̂_j/(t+g_j) <= 1 (t at or right of the minimum),
// the row q_j = e^(-r)·G(t)·p̂_j/(t+g_j), with the remaining mass 1 - Z(t)
// on a state of largest value, is feasible (KL(p̂‖q) <= r) and worth
// max v - Σ_j q_j g_j <= σ. The two differ by t·(1 - Z(t)). Newton's method
// on F(t) = ln Z(t) = 0 in ln t (F decreasing; F'(t) = -Var_p̂(1/(t+g))/Σp̂/(t+g)),
// safeguarded by bisection and warm-started from the last t of the row,
// stops when the best upper and lower values found are within eps. Every
// quantity is computed in a form without cancellation (log1p, expm1).
func (m *model) kl(c int, v, q []float64) (lo, hi float64) {
	off, end := m.off[c], m.off[c+1]
	to, p := m.to[off:end], m.center[off:end]
	r := m.radius[c]
	if r == 0 || len(to) == 1 {
		copy(q, p)
		s := 0.0
		for i, j := range to {
			s += p[i] * v[j]
		}
		return s, s
	}
	vmax, top := math.Inf(-1), 0
	for i, j := range to {
		if v[j] >= vmax {
			vmax, top = v[j], i
		}
	}
	if math.IsInf(r, 1) {
		clear(q)
		q[top] = 1
		return vmax, vmax
	}
	g := m.gs[:len(to)]
	p0, spread := 0.0, false
	mean := 0.0
	for i, j := range to {
		g[i] = vmax - v[j]
		if p[i] > 0 {
			if g[i] == 0 {
				p0 += p[i]
			} else {
				spread = true
			}
			mean += p[i] * g[i]
		}
	}
	if !spread {
		// All nominal mass already sits on states of largest value.
		copy(q, p)
		return vmax, vmax
	}
	if p0 == 0 {
		// The largest value is only at widened targets: the minimum may be
		// at the boundary t = 0.
		logG, s := 0.0, 0.0
		for i := range to {
			if p[i] > 0 {
				logG += p[i] * math.Log(g[i])
				s += p[i] / g[i]
			}
		}
		if lam := math.Exp(logG - r); lam*s <= 1 {
			lo = vmax
			for i := range to {
				q[i] = 0
				if p[i] > 0 {
					q[i] = lam * p[i] / g[i]
					lo -= q[i] * g[i]
				}
			}
			q[top] += 1 - lam*s
			hi = vmax - lam
			return min(lo, hi), max(lo, hi)
		}
	}
	t := m.dual[c]
	if !(t > 0) || math.IsInf(t, 0) {
		// For small r the minimum is near sqrt(Var(g)/(2r)).
		variance := 0.0
		for i := range to {
			if p[i] > 0 {
				variance += p[i] * (g[i] - mean) * (g[i] - mean)
			}
		}
		t = math.Sqrt(variance / (2 * r))
		if !(t > 0) || math.IsInf(t, 0) {
			t = mean
		}
	}
	// Below tMin the answer is max v to within tMin: the root is never
	// sought there, which keeps every logarithm and exponential finite.
	gmax := slices.Max(g)
	tMin := 1e-280 * gmax
	t = max(t, tMin)
	lo, hi = math.Inf(-1), math.Inf(1)
	tLo, tHi := 0.0, math.Inf(1)
	found := false
	for range maxNewton {
		l, d := 0.0, 0.0
		for i := range to {
			if p[i] > 0 {
				l += p[i] * math.Log1p(g[i]/t)
				d += p[i] * g[i] / (t + g[i])
			}
		}
		b := 1 - d // Σ p̂_j t/(t+g_j)
		f := l - r + math.Log1p(-d)
		hi = min(hi, vmax-timesExpm1(t, l-r))
		if f > 0 {
			tLo = t
		} else {
			tHi = t
			// q_j = e^(l-r)·p̂_j·t/(t+g_j), in logarithms so that nothing
			// overflows for small t.
			x := m.xs[:len(to)]
			val, mass := vmax, 0.0
			for i := range to {
				x[i] = 0
				if p[i] > 0 {
					x[i] = math.Exp(l - r + math.Log(p[i]) - math.Log1p(g[i]/t))
					val -= x[i] * g[i]
					mass += x[i]
				}
			}
			if val > lo {
				lo, found = val, true
				copy(q, x)
				q[top] += 1 - mass
				m.dual[c] = t
			}
		}
		if hi-lo <= m.eps || (!math.IsInf(tHi, 1) && tHi-tLo <= 1e-15*tHi) {
			break
		}
		// Newton step in u = ln t: dF/du = -Var_p̂(b_j)/B, b_j = t/(t+g_j).
		variance := 0.0
		for i := range to {
			if p[i] > 0 {
				x := t/(t+g[i]) - b
				variance += p[i] * x * x
			}
		}
		next := t * math.Exp(f*b/variance)
		if !(next > tLo && next < tHi) {
			switch {
			case math.IsInf(tHi, 1):
				next = 4 * max(t, tLo)
			case tLo == 0:
				next = tHi / 4
			default:
				next = math.Sqrt(tLo * tHi)
			}
		}
		if next = max(next, tMin); next == t {
			break
		}
		t = next
	}
	if !found {
		// No point right of the minimum yet: the nominal row is feasible.
		copy(q, p)
		lo = 0
		for i, j := range to {
			lo += p[i] * v[j]
		}
	}
	return min(lo, hi), hi
}
