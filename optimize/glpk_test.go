package optimize

import (
	"bufio"
	"context"
	"fmt"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// glpsol returns the path of GLPK's stand-alone solver, skipping the test
// when it is absent, except under CI=true, where its absence fails.
func glpsol(t *testing.T) string {
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

// writeCPLEX writes the primal LP of p in CPLEX LP format:
//
//	maximise Σ_s v_s  subject to  v_s - γ Σ_j P(j|s,a) v_j <= c(s,a), v free,
//
// whose unique optimum is v* (Puterman 1994, §6.9).
func writeCPLEX(path string, p *Problem) error {
	var b strings.Builder
	b.WriteString("Maximize\n obj:")
	for s := range p.States {
		fmt.Fprintf(&b, " + v%d", s)
	}
	b.WriteString("\nSubject To\n")
	for s, cs := range p.Choices {
		for k, c := range cs {
			coef := map[int]float64{s: 1}
			for _, e := range c.Next {
				coef[e.To] -= p.Discount * e.P
			}
			fmt.Fprintf(&b, " c%d_%d:", s, k)
			for j := range p.States {
				if x, ok := coef[j]; ok && x != 0 {
					fmt.Fprintf(&b, " %+.17g v%d", x, j)
				}
			}
			fmt.Fprintf(&b, " <= %.17g\n", c.Cost)
		}
	}
	b.WriteString("Bounds\n")
	for s := range p.States {
		fmt.Fprintf(&b, " v%d free\n", s)
	}
	b.WriteString("End\n")
	return os.WriteFile(path, []byte(b.String()), 0o644)
}

// readColumns reads the column primal values of a glpsol -w solution file.
func readColumns(path string, n int) ([]float64, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	v := make([]float64, n)
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		fields := strings.Fields(sc.Text())
		if len(fields) >= 2 && fields[0] == "s" && (len(fields) < 6 || fields[4] != "f") {
			return nil, fmt.Errorf("glpsol solution not feasible: %s", sc.Text())
		}
		if len(fields) != 5 || fields[0] != "j" {
			continue
		}
		j, err := strconv.Atoi(fields[1])
		if err != nil {
			return nil, err
		}
		if v[j-1], err = strconv.ParseFloat(fields[3], 64); err != nil {
			return nil, err
		}
	}
	return v, sc.Err()
}

// GLPK's glpsol (Debian glpk-utils), an LP solver independent of ours,
// finds the same optimal values as policy iteration.
func TestGLPKAgrees(t *testing.T) {
	bin := glpsol(t)
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(11, 12))
	problems := []*Problem{forest(0.9), referenceCases()[1].p}
	for range 12 {
		n := 2 + rng.IntN(25)
		problems = append(problems, randomProblem(rng, n, 1+rng.IntN(4), 1+rng.IntN(n), 0.9, 1000))
	}
	for i, p := range problems {
		lp, sol := filepath.Join(dir, fmt.Sprintf("p%d.lp", i)), filepath.Join(dir, fmt.Sprintf("p%d.sol", i))
		if err := writeCPLEX(lp, p); err != nil {
			t.Fatal(err)
		}
		if out, err := exec.Command(bin, "--lp", lp, "-w", sol).CombinedOutput(); err != nil {
			t.Fatalf("glpsol: %v\n%s", err, out)
		}
		want, err := readColumns(sol, len(p.States))
		if err != nil {
			t.Fatal(err)
		}
		r, err := Solve(context.Background(), p, &Settings{Method: PolicyIteration})
		if err != nil {
			t.Fatal(err)
		}
		// glpsol prints 15 significant digits; values are below 1e4.
		checkClose(t, fmt.Sprintf("problem %d value", i), r.Value, want, 1e-8)
	}
}
