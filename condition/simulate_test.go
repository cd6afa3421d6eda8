package condition

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// Binomial draws match the exact distribution: a chi-square test against
// the binomial pmf (gonum's distuv.Binomial, an independent
// implementation) on both algorithms' ranges.
func TestBinomialMatchesPMF(t *testing.T) {
	rng := rand.New(rand.NewPCG(91, 92))
	for _, tc := range []struct {
		n int
		p float64
	}{{10, 0.3}, {40, 0.9}, {200, 0.05}, {400, 0.4}, {1000, 0.5}, {5000, 0.93}} {
		const draws = 200000
		hist := make([]float64, tc.n+1)
		for range draws {
			hist[Binomial(rng, tc.n, tc.p)]++
		}
		ref := distuv.Binomial{N: float64(tc.n), P: tc.p}
		chi, df := 0.0, -1
		tail := 0.0
		tailExp := 0.0
		for k, o := range hist {
			e := draws * ref.Prob(float64(k))
			if e < 5 {
				tail += o
				tailExp += e
				continue
			}
			chi += (o - e) * (o - e) / e
			df++
		}
		if tailExp > 0 {
			chi += (tail - tailExp) * (tail - tailExp) / max(tailExp, 1)
			df++
		}
		if p := (distuv.ChiSquared{K: float64(df)}).Survival(chi); p < 1e-4 {
			t.Errorf("n=%d p=%g: chi-square %g on %d df, p = %g", tc.n, tc.p, chi, df, p)
		}
	}
}

// Multinomial counts conserve units and have the right means.
func TestMultinomialMeans(t *testing.T) {
	rng := rand.New(rand.NewPCG(93, 94))
	row := []Entry{{0, 0.5}, {2, 0.3}, {3, 0.2}}
	sum := make([]float64, 4)
	const runs, n = 20000, 37
	for range runs {
		out := make([]int, 4)
		Multinomial(rng, n, row, out)
		tot := 0
		for j, c := range out {
			tot += c
			sum[j] += float64(c)
		}
		if tot != n {
			t.Fatalf("%d units out of %d", tot, n)
		}
	}
	for _, e := range row {
		mean := sum[e.To] / runs
		se := math.Sqrt(n * e.P * (1 - e.P) / runs)
		if math.Abs(mean-n*e.P) > 4*se {
			t.Errorf("target %d: mean %g, want %g (4 SE = %g)", e.To, mean, n*e.P, 4*se)
		}
	}
}
