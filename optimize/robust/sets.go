package robust

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"

	"fixpoint/optimize"
)

// Kind names the shape of the ambiguity sets.
type Kind int

const (
	// L1 is the ball {q : ‖q - p̂‖₁ <= r} around the nominal row p̂; r is in
	// [0, 2] (2 and above: the whole simplex on the support).
	L1 Kind = iota
	// KL is the likelihood region {q : KL(p̂‖q) = Σ_j p̂_j ln(p̂_j/q_j) <= r}
	// of Nilim & El Ghaoui (2005, §4), r in nats (+Inf: the whole simplex on
	// the support).
	KL
)

var kindNames = [...]string{L1: "l1", KL: "kl"}

func (k Kind) String() string {
	if k >= 0 && int(k) < len(kindNames) {
		return kindNames[k]
	}
	return fmt.Sprintf("Kind(%d)", int(k))
}

// ParseKind returns the kind named s: l1 or kl.
func ParseKind(s string) (Kind, error) {
	for k, name := range kindNames {
		if s == name {
			return Kind(k), nil
		}
	}
	return L1, fmt.Errorf("robust: unknown set %q, want one of %s", s, strings.Join(kindNames[:], ", "))
}

// Source says where the radii of a Sets came from.
type Source int

const (
	// GivenUniform: one radius for every row (Uniform).
	GivenUniform Source = iota
	// GivenPerRow: a radius per action and state (PerRow).
	GivenPerRow
	// Derived: from a confidence level and the number of observed
	// transitions per row, through a concentration bound (FromCounts).
	Derived
)

var sourceNames = [...]string{GivenUniform: "uniform", GivenPerRow: "per-row", Derived: "confidence"}

func (s Source) String() string {
	if s >= 0 && int(s) < len(sourceNames) {
		return sourceNames[s]
	}
	return fmt.Sprintf("Source(%d)", int(s))
}

// NoData says what FromCounts does with an admissible row that has no
// observations.
type NoData int

const (
	// WholeSimplex gives the row the whole simplex on its support (L1
	// radius 2, KL radius +Inf): nothing is known of it but which
	// transitions are possible. It needs no share of the confidence.
	WholeSimplex NoData = iota
	// Refuse makes FromCounts return an error naming every such row.
	Refuse
)

// Options are the choices common to every way of building Sets. A nil
// *Options means no widened supports and WholeSimplex.
type Options struct {
	// Widen[a][s] lists states that the set of row (s, a) may reach
	// although the nominal row gives them probability zero. Without it
	// every structural zero stays zero. Widen, or Widen[a], may be nil.
	Widen [][][]int
	// NoData applies to FromCounts only.
	NoData NoData
}

// Row is the ambiguity set of one admissible choice.
type Row struct {
	State, Action int
	// Radius is the set's radius: L1 distance in [0, 2], or KL divergence
	// in nats (+Inf for the whole simplex).
	Radius float64
	// Support lists, in increasing order, the states the set may put
	// probability on: the nominal row's positive entries and Widened.
	Support []int
	// Widened are the targets added by Options.Widen, in increasing order.
	Widened []int
	// Observations is the number of transitions behind the radius
	// (FromCounts), or -1 when the radius was given.
	Observations int
	// NoData marks a FromCounts row without observations: its set is the
	// whole simplex on Support.
	NoData bool
}

// Sets are the (s,a)-rectangular ambiguity sets of every admissible choice
// of one Problem: nature picks each row from its own set independently of
// the others (Iyengar 2005, Assumption 2.1; Nilim & El Ghaoui 2005, §2).
// A Sets belongs to the Problem it was built from; Solve checks that the
// shapes still match.
type Sets struct {
	Kind   Kind
	Source Source
	// Rows[s][k] is the set of Choices[s][k] of the problem.
	Rows [][]Row
	// Radius is the common radius of GivenUniform, NaN otherwise.
	Radius float64
	// Confidence is the level in (0, 1) of FromCounts, NaN otherwise.
	Confidence float64
	// Bounded is the number of rows that share the miss probability
	// 1 - Confidence in the union bound (rows with observations and at
	// least two support states); RowMiss = (1 - Confidence)/Bounded is each
	// one's share. 0 and NaN unless FromCounts (RowMiss is also NaN when
	// no row has data).
	Bounded int
	RowMiss float64
	// Statement says in plain words what the sets support; every output
	// that shows a worst-case cost should carry it.
	Statement string
}

// RowError is a fault of a set specification at one row. State and Action
// are indices, or -1 when not applicable.
type RowError struct {
	State, Action int
	Problem       string
}

func (e *RowError) Error() string {
	switch {
	case e.State >= 0 && e.Action >= 0:
		return fmt.Sprintf("robust: state %d, action %d: %s", e.State, e.Action, e.Problem)
	case e.Action >= 0:
		return fmt.Sprintf("robust: action %d: %s", e.Action, e.Problem)
	}
	return "robust: " + e.Problem
}

// Uniform gives every admissible row of p a set of the same radius: an L1
// distance in [0, 2] or a KL divergence in nats, finite and >= 0. Radius 0
// is the nominal problem.
func Uniform(p *optimize.Problem, kind Kind, radius float64, o *Options) (*Sets, error) {
	if err := checkRadius(kind, radius); err != nil {
		return nil, &RowError{State: -1, Action: -1, Problem: err.Error()}
	}
	s, err := newSets(p, kind, GivenUniform, o, func(st, a, k int) (float64, int, error) { return radius, -1, nil })
	if err != nil {
		return nil, err
	}
	s.Radius = radius
	s.Statement = statement(s)
	return s, nil
}

// PerRow gives row (s, a) of p the radius radius[a][s] (the layout of
// costs.Schedule.Action and condition.Fit.Rows); entries of rows that are
// not admissible are ignored.
func PerRow(p *optimize.Problem, kind Kind, radius [][]float64, o *Options) (*Sets, error) {
	if len(radius) != len(p.Actions) {
		return nil, &RowError{State: -1, Action: -1, Problem: fmt.Sprintf("%d radius lists for %d actions", len(radius), len(p.Actions))}
	}
	s, err := newSets(p, kind, GivenPerRow, o, func(st, a, k int) (float64, int, error) {
		if len(radius[a]) != len(p.States) {
			return 0, 0, fmt.Errorf("%d radii for %d states", len(radius[a]), len(p.States))
		}
		r := radius[a][st]
		return r, -1, checkRadius(kind, r)
	})
	if err != nil {
		return nil, err
	}
	s.Statement = statement(s)
	return s, nil
}

// FromCounts derives the radii from the number of observed one-period
// transitions per row, observations[a][s] (condition.Fit.Rows[a][s].N;
// observations[a] may be nil for an action without records), so that with
// probability at least confidence every true row lies in its set. Each row
// with n > 0 observations and k >= 2 support states gets the miss
// probability δ = (1 - confidence)/m, m the number of such rows (the union
// bound, or Bonferroni: P(some row outside) <= Σ δ = 1 - confidence), and
// the radius of its bound at δ: L1Radius(k, n, δ) for L1 (Weissman et al.
// 2003), KLRadius(k, n, δ) for KL (method of types). A row with one
// support state is known exactly (radius 0); a row without observations is
// handled by o.NoData.
//
// The statement holds under the bounds' assumptions: the nominal rows are
// the counting estimates n_ij/n_i from these observations, the
// observations of a row are independent draws from it (given their
// number), and transitions outside the support are impossible (widen the
// support where that is not known).
func FromCounts(p *optimize.Problem, kind Kind, confidence float64, observations [][]int, o *Options) (*Sets, error) {
	if !(confidence > 0 && confidence < 1) {
		return nil, &RowError{State: -1, Action: -1, Problem: fmt.Sprintf("confidence %v is not in (0, 1)", confidence)}
	}
	if len(observations) != len(p.Actions) {
		return nil, &RowError{State: -1, Action: -1, Problem: fmt.Sprintf("%d observation lists for %d actions", len(observations), len(p.Actions))}
	}
	var o2 Options
	if o != nil {
		o2 = *o
	}
	count := func(st, a int) (int, error) {
		if observations[a] == nil {
			return 0, nil
		}
		if len(observations[a]) != len(p.States) {
			return 0, fmt.Errorf("%d observation counts for %d states", len(observations[a]), len(p.States))
		}
		if observations[a][st] < 0 {
			return 0, fmt.Errorf("observation count %d is negative", observations[a][st])
		}
		return observations[a][st], nil
	}
	// First pass: supports and counts, to know m.
	s, err := newSets(p, kind, Derived, o, func(st, a, k int) (float64, int, error) {
		n, err := count(st, a)
		return 0, n, err
	})
	if err != nil {
		return nil, err
	}
	var errs []error
	m := 0
	for st := range s.Rows {
		for k := range s.Rows[st] {
			row := &s.Rows[st][k]
			switch {
			case len(row.Support) <= 1:
			case row.Observations == 0:
				row.NoData = true
				if o2.NoData == Refuse {
					errs = append(errs, &RowError{State: st, Action: row.Action, Problem: "no observations for this row"})
				}
			default:
				m++
			}
		}
	}
	if err := errors.Join(errs...); err != nil {
		return nil, err
	}
	s.Confidence, s.Bounded = confidence, m
	if m > 0 {
		s.RowMiss = (1 - confidence) / float64(m)
	}
	for st := range s.Rows {
		for k := range s.Rows[st] {
			row := &s.Rows[st][k]
			row.Radius = countRadius(kind, len(row.Support), row.Observations, s.RowMiss)
		}
	}
	s.Statement = statement(s)
	return s, nil
}

// countRadius is the radius of a row of k support states and n
// observations at miss probability miss.
func countRadius(kind Kind, k, n int, miss float64) float64 {
	if k <= 1 {
		return 0
	}
	if kind == KL {
		return KLRadius(k, n, miss)
	}
	return L1Radius(k, n, miss)
}

func checkRadius(kind Kind, r float64) error {
	if !(r >= 0) || math.IsInf(r, 0) {
		return fmt.Errorf("%v radius %v is not finite and >= 0", kind, r)
	}
	return nil
}

// newSets builds the rows of p's sets: supports (with widened targets) and
// radius and observation count from radius(state, action, position).
func newSets(p *optimize.Problem, kind Kind, src Source, o *Options, radius func(st, a, k int) (float64, int, error)) (*Sets, error) {
	if kind != L1 && kind != KL {
		return nil, &RowError{State: -1, Action: -1, Problem: fmt.Sprintf("unknown set kind %v", kind)}
	}
	if err := p.Validate(true); err != nil {
		return nil, err
	}
	var widen [][][]int
	if o != nil {
		widen = o.Widen
	}
	n := len(p.States)
	var errs []error
	add := func(st, a int, format string, args ...any) {
		errs = append(errs, &RowError{State: st, Action: a, Problem: fmt.Sprintf(format, args...)})
	}
	if widen != nil && len(widen) != len(p.Actions) {
		add(-1, -1, "%d widen lists for %d actions", len(widen), len(p.Actions))
		widen = nil
	}
	targets := func(st, a int) []int {
		if widen == nil || len(widen[a]) != n {
			return nil
		}
		return widen[a][st]
	}
	for a := range widen {
		if widen[a] != nil && len(widen[a]) != n {
			add(-1, a, "%d widen lists for %d states", len(widen[a]), n)
		}
		for st := range widen[a] {
			if len(targets(st, a)) > 0 && !admissible(p, st, a) {
				add(st, a, "widen targets for a row that is not admissible")
			}
		}
	}
	s := &Sets{Kind: kind, Source: src, Rows: make([][]Row, n), Radius: math.NaN(), Confidence: math.NaN(), RowMiss: math.NaN()}
	for st, cs := range p.Choices {
		s.Rows[st] = make([]Row, len(cs))
		for k, c := range cs {
			row := Row{State: st, Action: c.Action, Observations: -1}
			for _, e := range c.Next {
				if e.P > 0 {
					row.Support = append(row.Support, e.To)
				}
			}
			slices.Sort(row.Support)
			row.Support = slices.Compact(row.Support)
			if ts := targets(st, c.Action); len(ts) > 0 {
				for _, j := range ts {
					if j < 0 || j >= n {
						add(st, c.Action, "widen target %d is not a state", j)
						continue
					}
					if _, found := slices.BinarySearch(row.Support, j); !found {
						row.Widened = append(row.Widened, j)
					}
				}
				slices.Sort(row.Widened)
				row.Widened = slices.Compact(row.Widened)
				row.Support = append(row.Support, row.Widened...)
				slices.Sort(row.Support)
			}
			r, obs, err := radius(st, c.Action, k)
			if err != nil {
				add(st, c.Action, "%v", err)
			}
			row.Radius = r
			if src == Derived {
				row.Observations = obs
			}
			s.Rows[st][k] = row
		}
	}
	if err := errors.Join(errs...); err != nil {
		return nil, err
	}
	return s, nil
}

func admissible(p *optimize.Problem, s, a int) bool {
	for _, c := range p.Choices[s] {
		if c.Action == a {
			return true
		}
	}
	return false
}

// statement says in words what the sets support.
func statement(s *Sets) string {
	const allowed = "on the transitions the model allows (and any widened ones)"
	within := func(r string) string {
		if s.Kind == KL {
			return fmt.Sprintf("within likelihood divergence %s nats of the model's row, KL(model row ‖ row)", r)
		}
		return fmt.Sprintf("within L1 distance %s of the model's row (half of it is the probability moved)", r)
	}
	const worst = "The worst-case costs are the highest expected costs over all such matrices. "
	switch s.Source {
	case GivenUniform:
		return "Every transition row may be any distribution " + within(fmt.Sprintf("%.4g", s.Radius)) + ", " + allowed + ". " + worst +
			"The radius was given, not derived from records: no confidence level is attached."
	case GivenPerRow:
		return "Every transition row may be any distribution " + within("the radius given for it") + ", " + allowed + ". " + worst +
			"The radii were given, not derived from records: no confidence level is attached."
	}
	bound, radius := "Weissman et al. (2003)", "L1 radius"
	if s.Kind == KL {
		bound, radius = "the method of types", "divergence radius"
	}
	noData := 0
	for _, rows := range s.Rows {
		for _, r := range rows {
			if r.NoData {
				noData++
			}
		}
	}
	var b strings.Builder
	fmt.Fprintf(&b, "With probability at least %.4g%% over the inspection records, every true transition row lies in its set, "+
		"so the worst-case costs bound the true expected costs of the advised policy. ", 100*s.Confidence)
	if s.Bounded > 0 {
		fmt.Fprintf(&b, "Each of the %d rows with records has the %s that %s gives at miss probability %.3g "+
			"(%.4g%% shared among them by the union bound). ", s.Bounded, radius, bound, s.RowMiss, 100*(1-s.Confidence))
	}
	if noData > 0 {
		fmt.Fprintf(&b, "%d rows without records may be any distribution %s. ", noData, allowed)
	}
	b.WriteString("This assumes that the model's rows are the counting estimates from these records, that the records are " +
		"independent one-period transitions, and that transitions the model marks impossible are impossible.")
	return b.String()
}
