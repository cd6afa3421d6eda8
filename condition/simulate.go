package condition

import (
	"math"
	"math/rand/v2"
)

// Step draws the next state from a row with the random source rng, by
// inversion of the cumulative distribution in row order. The row must be
// non-empty.
func Step(row []Entry, rng *rand.Rand) int {
	u := rng.Float64()
	for _, e := range row {
		if u < e.P {
			return e.To
		}
		u -= e.P
	}
	return row[len(row)-1].To
}

// Binomial draws the number of successes in n trials of probability p.
// It is exact: inversion by sequential search when n·min(p, 1-p) < 30
// (algorithm BINV of V. Kachitvichyanukul & B. W. Schmeiser, Binomial
// random variate generation, Comm. ACM 31, 1988), and otherwise rejection
// from a Cauchy proposal (W. H. Press et al., Numerical Recipes in C, 2nd
// ed., 1992, §7.3).
func Binomial(rng *rand.Rand, n int, p float64) int {
	switch {
	case n <= 0 || p <= 0:
		return 0
	case p >= 1:
		return n
	}
	q := p
	if q > 0.5 {
		q = 1 - q
	}
	var x int
	if float64(n)*q < 30 {
		r := q / (1 - q)
		s := float64(n+1) * r
		a := math.Pow(1-q, float64(n))
		u := rng.Float64()
		for u > a && x < n {
			u -= a
			x++
			a *= s/float64(x) - r
		}
	} else {
		x = binomialReject(rng, n, q)
	}
	if q != p {
		return n - x
	}
	return x
}

// binomialReject is rejection sampling from a Cauchy (Lorentzian)
// comparison function for n·p >= 30, p <= 1/2.
func binomialReject(rng *rand.Rand, n int, p float64) int {
	fn := float64(n)
	am := fn * p
	g, _ := math.Lgamma(fn + 1)
	plog, pclog := math.Log(p), math.Log1p(-p)
	sq := math.Sqrt(2 * am * (1 - p))
	for {
		var em, y float64
		for {
			y = math.Tan(math.Pi * rng.Float64())
			em = sq*y + am
			if em >= 0 && em < fn+1 {
				break
			}
		}
		em = math.Floor(em)
		l1, _ := math.Lgamma(em + 1)
		l2, _ := math.Lgamma(fn - em + 1)
		t := 1.2 * sq * (1 + y*y) * math.Exp(g-l1-l2+em*plog+(fn-em)*pclog)
		if rng.Float64() <= t {
			return int(em)
		}
	}
}

// Multinomial draws how n units spread over the targets of a row and adds
// the counts to out[To], by conditional binomials: the count of each
// target given those before it.
func Multinomial(rng *rand.Rand, n int, row []Entry, out []int) {
	mass := 1.0
	for i, e := range row {
		if n == 0 {
			return
		}
		if i == len(row)-1 || e.P >= mass {
			out[e.To] += n
			return
		}
		k := Binomial(rng, n, e.P/mass)
		out[e.To] += k
		n -= k
		mass -= e.P
	}
}
