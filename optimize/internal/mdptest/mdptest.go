// Package mdptest holds what the tests of optimize and its subpackages
// share: GLPK's stand-alone solver glpsol (Debian package glpk-utils) as an
// independent reference, the primal LP of a discounted MDP in CPLEX LP
// format, and random transition rows. It imports no fixpoint package but
// condition and costs, so that optimize's own internal tests can use it.
package mdptest

import (
	"bufio"
	"fmt"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"fixpoint/condition"
	"fixpoint/costs"
)

// Glpsol returns the path of GLPK's stand-alone solver, skipping the test
// when it is absent, except under CI=true, where its absence fails.
func Glpsol(t testing.TB) string {
	t.Helper()
	path, err := exec.LookPath("glpsol")
	if err != nil {
		if os.Getenv("CI") == "true" {
			t.Fatal("glpsol not found; CI must install glpk-utils")
		}
		t.Skip("glpsol not found (Debian package glpk-utils); skipping the GLPK cross-check")
	}
	return path
}

// SolveLP writes lp (CPLEX LP format) to a temporary file, solves it with
// glpsol and returns the primal values of the first n columns in the order
// glpsol numbers them (the order of first appearance in the objective) and
// the optimal objective value.
func SolveLP(t testing.TB, bin, lp string, n int) ([]float64, float64) {
	t.Helper()
	dir := t.TempDir()
	in, sol := filepath.Join(dir, "model.lp"), filepath.Join(dir, "model.sol")
	if err := os.WriteFile(in, []byte(lp), 0o644); err != nil {
		t.Fatal(err)
	}
	if out, err := exec.Command(bin, "--lp", in, "-w", sol).CombinedOutput(); err != nil {
		t.Fatalf("glpsol: %v\n%s", err, out)
	}
	v, obj, err := readSolution(sol, n)
	if err != nil {
		t.Fatal(err)
	}
	return v, obj
}

// readSolution reads the column primal values and the objective of a
// glpsol -w solution file.
func readSolution(path string, n int) ([]float64, float64, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, 0, err
	}
	defer f.Close()
	v := make([]float64, n)
	obj := 0.0
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		fields := strings.Fields(sc.Text())
		if len(fields) >= 2 && fields[0] == "s" {
			if len(fields) < 7 || fields[4] != "f" {
				return nil, 0, fmt.Errorf("glpsol solution not feasible: %s", sc.Text())
			}
			if obj, err = strconv.ParseFloat(fields[6], 64); err != nil {
				return nil, 0, err
			}
		}
		if len(fields) != 5 || fields[0] != "j" {
			continue
		}
		j, err := strconv.Atoi(fields[1])
		if err != nil {
			return nil, 0, err
		}
		if j > n {
			continue
		}
		if v[j-1], err = strconv.ParseFloat(fields[3], 64); err != nil {
			return nil, 0, err
		}
	}
	return v, obj, sc.Err()
}

// Choice is one (state, action) pair of an MDP for PrimalLP: the state it
// belongs to, its expected one-period cost and next-state distribution.
// Discount, when not zero, replaces the problem's factor for this choice
// (semi-Markov models discount each decision by its own expected factor;
// Next then holds the discounted weights and Discount is 1).
type Choice struct {
	State    int
	Cost     float64
	Next     []condition.Entry
	Discount float64
}

// PrimalLP returns the primal LP of a discounted MDP of n states in CPLEX
// LP format:
//
//	maximise Σ_s v_s  subject to  v_s - γ Σ_j P(j|s,a) v_j <= c(s,a), v free,
//
// whose unique optimum is v* (Puterman 1994, §6.9). Columns are v1..vn
// (glpsol numbers them in that order).
func PrimalLP(n int, gamma float64, choices []Choice) string {
	var b strings.Builder
	b.WriteString("Maximize\n obj:")
	for s := range n {
		fmt.Fprintf(&b, " + v%d", s+1)
	}
	b.WriteString("\nSubject To\n")
	for k, c := range choices {
		g := gamma
		if c.Discount != 0 {
			g = c.Discount
		}
		coef := make([]float64, n)
		coef[c.State] = 1
		for _, e := range c.Next {
			coef[e.To] -= g * e.P
		}
		fmt.Fprintf(&b, " c%d:", k+1)
		for j, x := range coef {
			if x != 0 {
				fmt.Fprintf(&b, " %+.17g v%d", x, j+1)
			}
		}
		fmt.Fprintf(&b, " <= %.17g\n", c.Cost)
	}
	b.WriteString("Bounds\n")
	for s := range n {
		fmt.Fprintf(&b, " v%d free\n", s+1)
	}
	b.WriteString("End\n")
	return b.String()
}

// RandomRow returns a probability row over n states with at most k
// non-zero entries, exponential weights normalised to sum 1.
func RandomRow(rng *rand.Rand, n, k int) []condition.Entry {
	targets := rng.Perm(n)[:min(k, n)]
	w := make([]float64, len(targets))
	sum := 0.0
	for i := range w {
		w[i] = rng.ExpFloat64()
		sum += w[i]
	}
	row := make([]condition.Entry, len(targets))
	for i, t := range targets {
		row[i] = condition.Entry{To: t, P: w[i] / sum}
	}
	return row
}

// RandomClass is an n-state class of equipment with m actions (m >= 2): a passive action that drifts
// down the scale (not admissible in the unsafe last state), a repair one
// or two states up, and a replacement; costs invented.
func RandomClass(rng *rand.Rand, n, m int) (*condition.Model, *costs.Schedule) {
	st := make([]condition.State, n)
	for i := range st {
		st[i] = condition.State{Name: "c" + strconv.Itoa(i), Unsafe: i == n-1}
	}
	model := &condition.Model{PeriodYears: 0.5, States: st}
	sched := &costs.Schedule{Currency: "EUR", Running: make([]float64, n)}
	for i := range n {
		sched.Running[i] = 10 * float64(i*i) * (0.5 + rng.Float64())
	}
	for a := range m {
		act := condition.Action{Name: "a" + strconv.Itoa(a), Passive: a == 0, Rows: make([][]condition.Entry, n)}
		cost := make([]float64, n)
		for x := range n {
			switch {
			case a == 0 && x < n-1:
				stay := 0.5 + 0.4*rng.Float64()
				act.Rows[x] = []condition.Entry{{To: x, P: stay}, {To: x + 1, P: 1 - stay}}
			case a == m-1:
				act.Rows[x] = []condition.Entry{{To: 0, P: 1}}
				cost[x] = 400 + 200*rng.Float64()
			case a > 0 && x > 0:
				up := max(0, x-a)
				act.Rows[x] = []condition.Entry{{To: up, P: 0.8}, {To: x, P: 0.2}}
				cost[x] = 60*float64(a) + 40*rng.Float64()
			}
		}
		model.Actions = append(model.Actions, act)
		sched.Action = append(sched.Action, cost)
	}
	return model, sched
}

// Factor returns the discount of factor g per period of years years, and
// panics on invalid input (tests only).
func Factor(g, years float64) costs.Discount {
	p, err := costs.NewPeriod(years)
	if err != nil {
		panic(err)
	}
	d, err := costs.Factor(g, p)
	if err != nil {
		panic(err)
	}
	return d
}

// Rate returns the discount at rate per year over periods of years years,
// and panics on invalid input (tests only).
func Rate(rate, years float64) costs.Discount {
	p, err := costs.NewPeriod(years)
	if err != nil {
		panic(err)
	}
	d, err := costs.Rate(rate, p)
	if err != nil {
		panic(err)
	}
	return d
}
