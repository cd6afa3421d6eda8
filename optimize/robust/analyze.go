package robust

import (
	"cmp"
	"context"
	"math"
	"slices"

	"fixpoint/optimize"
)

// Analysis is everything a user reads about robust advice: the robust
// answer, the nominal one, what robustness costs under the nominal
// matrices, and which rows more data would settle.
type Analysis struct {
	// Sets are the ambiguity sets used (kind, radii or confidence, and the
	// Statement every output should carry).
	Sets *Sets
	// Robust is the certified robust answer (advice, worst-case costs with
	// bounds); Nominal is optimize.Solve's answer for the nominal matrices.
	Robust  *Result
	Nominal *optimize.Result
	// NominalCost[s] is the exact expected cost of the robust advice under
	// the nominal matrices (optimize.Evaluate).
	NominalCost []float64
	// NominalWorstCase[s] is the worst case of the nominal advice over the
	// sets (Evaluate, within Robust.Tol/8): what the robust advice guards
	// against. Robust.WorstCase[s] <= NominalWorstCase[s] up to Robust.Gap.
	NominalWorstCase []float64
	// Differs lists, in increasing order, the states where the robust
	// advice differs from the nominal advice.
	Differs []int
	// Price[s] = NominalCost[s] - Nominal.Value[s] is the price of
	// robustness in s: what the robust advice costs, under the nominal
	// matrices, above the nominal advice (0 where the advice agrees
	// everywhere it matters; the true price lies in [Price, Price +
	// Nominal.Gap]). PriceOfRobustness = max_s Price[s] is the summary
	// figure, reached in PriceState.
	Price             []float64
	PriceOfRobustness float64
	PriceState        int
	// Settle ranks the rows by how much more data on them would lower the
	// worst-case costs (see Settle).
	Settle []Gain
}

// Analyze solves p nominally (optimize.Solve) and robustly over sets
// (as Solve; policy iteration, when it runs, starts from the nominal
// advice),
// evaluates the robust advice under the nominal matrices and the nominal
// advice over the sets, and ranks the rows with Settle. Its cost is that of Settle: one robust solve per row
// with data, each warm-started.
func Analyze(ctx context.Context, p *optimize.Problem, sets *Sets, settings *optimize.Settings) (*Analysis, error) {
	m, s, err := prepare(p, sets, settings)
	if err != nil {
		return nil, err
	}
	nominal, err := optimize.Solve(ctx, p, settings)
	if err != nil {
		return nil, err
	}
	rob, err := m.solve(ctx, &s, nominal.Policy, nil)
	if err != nil {
		return nil, err
	}
	cost, err := optimize.Evaluate(p, rob.Policy)
	if err != nil {
		return nil, err
	}
	nomWorst, err := m.evaluate(ctx, nominal.Policy, s.Tol/8, maxAdversarySteps)
	if err != nil {
		return nil, err
	}
	a := &Analysis{Sets: sets, Robust: rob, Nominal: nominal, NominalCost: cost, NominalWorstCase: nomWorst.upper,
		Price: make([]float64, len(cost)), PriceOfRobustness: math.Inf(-1)}
	for st := range cost {
		if rob.Policy[st] != nominal.Policy[st] {
			a.Differs = append(a.Differs, st)
		}
		a.Price[st] = cost[st] - nominal.Value[st]
		if a.Price[st] > a.PriceOfRobustness {
			a.PriceOfRobustness, a.PriceState = a.Price[st], st
		}
	}
	if a.Settle, err = m.settle(ctx, &s, sets, rob); err != nil {
		return nil, err
	}
	return a, nil
}

// Gain is what more data on one row would do to the robust answer.
type Gain struct {
	State, Action int
	// Observations is the row's number of observations (-1 when the
	// radii were given); Radius its radius now and NewRadius with four
	// times the observations: the bound at 4n for FromCounts (for L1 half
	// the radius), half the radius for given L1 radii and a quarter for
	// given KL radii (the bounds' order in n: n^(-1/2) and n^(-1)).
	Observations      int
	Radius, NewRadius float64
	// Exact marks a row without data (NoData): four times nothing is
	// nothing, so NewRadius is 0, the row known exactly, the most any
	// data on it could do.
	Exact bool
	// Change[s] = WorstCase[s] now minus the worst-case cost of the new
	// robust advice; MaxChange = max_s Change[s], reached in MaxState.
	// Each is exact within Accuracy, the sum of the two solves' gaps.
	Change    []float64
	MaxChange float64
	MaxState  int
	Accuracy  float64
	// Policy is the robust advice with the new radius; AdviceChanges the
	// states where it differs from the current advice. Status is the new
	// solve's.
	//
	// Screened marks a row of an action other than the advice that cannot
	// become better than the advice even with the smaller set
	// (c + γ·max_{q∈P'} q·Lower >= Upper(s)): the robust optimum is then
	// unchanged, no solve is run, Change is 0 and Policy the current
	// advice.
	Policy        []int
	AdviceChanges []int
	Status        optimize.Status
	Screened      bool
}

// Settle ranks the rows of sets by how much four times their observations
// would lower the worst-case costs of r (a Solve of p over sets with the
// same settings): for each row with a positive radius and at least two
// support states, one robust solve with that row's radius shrunk (see
// Gain.NewRadius), warm-started from r's advice and worst rows. Largest
// MaxChange first; ties by state, then action. Cost: one warm-started
// solve per row (value iteration from r's worst case, then one or two
// O(n³) evaluations), except for rows screened out by a bound at O(k log k)
// (Gain.Screened).
func Settle(ctx context.Context, p *optimize.Problem, sets *Sets, r *Result, settings *optimize.Settings) ([]Gain, error) {
	m, s, err := prepare(p, sets, settings)
	if err != nil {
		return nil, err
	}
	m.setTol(s.Tol)
	return m.settle(ctx, &s, sets, r)
}

func (m *model) settle(ctx context.Context, s *optimize.Settings, sets *Sets, base *Result) ([]Gain, error) {
	n := len(base.Policy)
	// Prime every choice's worst row at the base answer, and keep that
	// warm state so that each row starts from the same point.
	m.sweep(base.Attained, make([]float64, n), make([]float64, n), make([]int, n))
	adv, dual := slices.Clone(m.adv), slices.Clone(m.dual)
	var gains []Gain
	for st := range sets.Rows {
		for k, row := range sets.Rows[st] {
			if row.Radius == 0 || len(row.Support) < 2 {
				continue
			}
			if err := ctx.Err(); err != nil {
				return nil, err
			}
			gn := Gain{State: st, Action: row.Action, Observations: row.Observations, Radius: row.Radius}
			switch {
			case row.NoData:
				gn.Exact = true
			case sets.Source == Derived:
				gn.NewRadius = countRadius(sets.Kind, len(row.Support), 4*row.Observations, sets.RowMiss)
			case sets.Kind == KL:
				gn.NewRadius = row.Radius / 4
			default:
				gn.NewRadius = row.Radius / 2
			}
			c := m.first[st] + k
			copy(m.adv, adv)
			copy(m.dual, dual)
			m.radius[c] = gn.NewRadius
			gn.Change = make([]float64, n)
			if row.Action != base.Policy[st] {
				// Screen: if even with the smaller set the action costs at
				// least the robust optimum, c + γ·σ'(Lower) >= Upper(s), then
				// v* is still the fixed point (the changed state's minimum
				// is unchanged; σ' is monotone) and nothing changes.
				lo, _ := m.inner(c, base.Lower, nil)
				if m.cost[c]+m.gamma*lo >= base.Upper[st] {
					m.radius[c] = row.Radius
					gn.Screened, gn.Accuracy, gn.Policy, gn.Status = true, base.Gap, base.Policy, base.Status
					gains = append(gains, gn)
					continue
				}
			}
			// The warm row must lie in the smaller set.
			m.inner(c, base.Attained, m.adv[m.off[c]:m.off[c+1]])
			r, err := m.solve(ctx, s, base.Policy, base.Attained)
			m.radius[c] = row.Radius
			if err != nil {
				return nil, err
			}
			gn.MaxChange = math.Inf(-1)
			for j := range n {
				gn.Change[j] = base.WorstCase[j] - r.WorstCase[j]
				if gn.Change[j] > gn.MaxChange {
					gn.MaxChange, gn.MaxState = gn.Change[j], j
				}
				if r.Policy[j] != base.Policy[j] {
					gn.AdviceChanges = append(gn.AdviceChanges, j)
				}
			}
			gn.Accuracy, gn.Policy, gn.Status = base.Gap+r.Gap, r.Policy, r.Status
			gains = append(gains, gn)
		}
	}
	copy(m.adv, adv)
	copy(m.dual, dual)
	slices.SortStableFunc(gains, func(a, b Gain) int {
		if x := cmp.Compare(b.MaxChange, a.MaxChange); x != 0 {
			return x
		}
		if a.State != b.State {
			return cmp.Compare(a.State, b.State)
		}
		return cmp.Compare(a.Action, b.Action)
	})
	return gains, nil
}
