package robust

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// Weissman et al. 2003 (HPL-2003-97), Theorem 2.1 in its distribution-free
// form (2^k - 2)·exp(-n·ε²/2), at stated points; the want values are the
// published formula evaluated by hand in Python 3 (math.exp), an
// independent computation.
func TestL1MissPublishedFormula(t *testing.T) {
	tests := []struct {
		k, n int
		eps  float64
		want float64
	}{
		{2, 8, 1, 0.03663127777746836},                           // 2·e^-4
		{5, 100, 0.5, 0.00011179959516236013},                    // 30·e^-12.5
		{10, 1000, 0.2, 2.1064990021322062e-06},                  // 1022·e^-20
		{1, 10, 0.1, 0},                                          // one outcome: known exactly
		{3, 0, 0.5, 6},                                           // no data: the prefactor
		{1100, 10, 0.1, math.Inf(1)},                             // 2^1100 overflows to +Inf (no bound)
		{60, 100000, 0.05, 1152921504606846974 * math.Exp(-125)}, // (2^60 - 2)·e^-125
	}
	for _, tt := range tests {
		got := L1Miss(tt.k, tt.n, tt.eps)
		if math.IsInf(tt.want, 1) {
			if !math.IsInf(got, 1) {
				t.Errorf("L1Miss(%d, %d, %g) = %g, want +Inf", tt.k, tt.n, tt.eps, got)
			}
			continue
		}
		if math.Abs(got-tt.want) > 1e-13*tt.want {
			t.Errorf("L1Miss(%d, %d, %g) = %.17g, want %.17g (rel tol 1e-13)", tt.k, tt.n, tt.eps, got, tt.want)
		}
	}
}

// The sharper form of Weissman et al.'s Theorem 2.1,
// (2^k - 2)·exp(-n·φ(π_p)·ε²/4) with φ(π) = ln((1-π)/π)/(1-2π) and
// φ(1/2) = 2, from the paper's definitions: φ >= 2 on (0, 1/2], so the
// distribution-free form we use is never smaller, and the two agree at
// π_p = 1/2 (e.g. a uniform row on two states).
func TestL1MissSharperForm(t *testing.T) {
	phi := func(pi float64) float64 {
		if pi == 0.5 {
			return 2
		}
		return math.Log((1-pi)/pi) / (1 - 2*pi)
	}
	for _, pi := range []float64{1e-6, 0.01, 0.1, 0.25, 0.4, 0.49, 0.5} {
		if phi(pi) < 2-1e-9 {
			t.Errorf("φ(%g) = %g < 2", pi, phi(pi))
		}
		for _, n := range []int{10, 100} {
			sharp := (math.Exp2(4) - 2) * math.Exp(-float64(n)*phi(pi)*0.3*0.3/4)
			if got := L1Miss(4, n, 0.3); got < sharp*(1-1e-12) {
				t.Errorf("L1Miss(4, %d, 0.3) = %g below the sharper bound %g at π = %g", n, got, sharp, pi)
			}
		}
	}
	if got, sharp := L1Miss(2, 50, 0.4), 2*math.Exp(-50*phi(0.5)*0.16/4); math.Abs(got-sharp) > 1e-15 {
		t.Errorf("L1Miss(2, 50, 0.4) = %g, sharper form at π = 1/2 gives %g", got, sharp)
	}
}

// Both bounds hold for two outcomes, where the exact tail is a binomial
// sum (gonum's distuv.Binomial, independent of the bounds): with X the
// count of the first outcome, ‖p̂ - p‖₁ = 2|X/n - p| and
// KL(p̂‖p) = h(X/n, p).
func TestBoundsAgainstBinomialTail(t *testing.T) {
	for _, n := range []int{5, 20, 80, 300} {
		for _, p := range []float64{0.02, 0.2, 0.5} {
			bin := distuv.Binomial{N: float64(n), P: p}
			for _, eps := range []float64{0.05, 0.2, 0.5} {
				l1, kl := 0.0, 0.0
				for x := 0; x <= n; x++ {
					f := float64(x) / float64(n)
					pr := bin.Prob(float64(x))
					if 2*math.Abs(f-p) >= eps {
						l1 += pr
					}
					d := 0.0
					if f > 0 {
						d += f * math.Log(f/p)
					}
					if f < 1 {
						d += (1 - f) * math.Log((1-f)/(1-p))
					}
					if d > eps {
						kl += pr
					}
				}
				if b := L1Miss(2, n, eps); l1 > b*(1+1e-12) {
					t.Errorf("n %d, p %g, ε %g: P(‖p̂-p‖₁ >= ε) = %g > L1Miss %g", n, p, eps, l1, b)
				}
				if b := KLMiss(2, n, eps); kl > b*(1+1e-12) {
					t.Errorf("n %d, p %g, ε %g: P(KL(p̂‖p) > ε) = %g > KLMiss %g", n, p, eps, kl, b)
				}
			}
		}
	}
}

// The method-of-types bound C(n+k-1, k-1)·exp(-n·ε) at stated points
// (Cover & Thomas, 2nd ed., Theorems 11.1.4 and 11.2.1, from memory;
// values by hand in Python 3: math.comb and math.exp).
func TestKLMissPublishedFormula(t *testing.T) {
	tests := []struct {
		k, n int
		eps  float64
		want float64
	}{
		{2, 10, 0.5, 0.07411741698994014},  // C(11,1)·e^-5
		{4, 30, 0.6, 8.30947694871521e-05}, // C(33,3) = 5456, ·e^-18
		{1, 30, 0.1, 0},
	}
	for _, tt := range tests {
		if got := KLMiss(tt.k, tt.n, tt.eps); math.Abs(got-tt.want) > 1e-12*max(tt.want, 1e-300) {
			t.Errorf("KLMiss(%d, %d, %g) = %.17g, want %.17g (rel tol 1e-12)", tt.k, tt.n, tt.eps, got, tt.want)
		}
	}
}

// The radii invert the bounds: at the returned radius the bound equals the
// miss probability (hand values from the closed forms in Python 3).
func TestRadiiInvertBounds(t *testing.T) {
	if got, want := L1Radius(5, 100, 0.01), 0.40015915752735803; math.Abs(got-want) > 1e-14 {
		t.Errorf("L1Radius(5, 100, 0.01) = %.17g, want %.17g", got, want)
	}
	if got, want := KLRadius(4, 30, 0.01), 0.4403213795170463; math.Abs(got-want) > 1e-14 {
		t.Errorf("KLRadius(4, 30, 0.01) = %.17g, want %.17g", got, want)
	}
	for _, k := range []int{2, 3, 6, 12} {
		for _, n := range []int{1, 10, 100, 10000} {
			for _, miss := range []float64{0.1, 1e-3, 1e-8} {
				if r := L1Radius(k, n, miss); r < 2 {
					if b := L1Miss(k, n, r); math.Abs(b-miss) > 1e-9*miss {
						t.Errorf("L1Miss(%d, %d, L1Radius = %g) = %g, want %g", k, n, r, b, miss)
					}
				}
				r := KLRadius(k, n, miss)
				if b := KLMiss(k, n, r); math.Abs(b-miss) > 1e-9*miss {
					t.Errorf("KLMiss(%d, %d, KLRadius = %g) = %g, want %g", k, n, r, b, miss)
				}
				// Four times the observations halve the L1 radius (until
				// the cap at 2).
				if r1, r4 := L1Radius(k, n, miss), L1Radius(k, 4*n, miss); r1 < 2 && math.Abs(r4-r1/2) > 1e-14 {
					t.Errorf("L1Radius(%d, %d) = %g, at 4n %g, want half", k, n, r1, r4)
				}
			}
		}
	}
	if L1Radius(1, 10, 0.1) != 0 || KLRadius(1, 10, 0.1) != 0 || L1Radius(3, 0, 0.1) != 2 || !math.IsInf(KLRadius(3, 0, 0.1), 1) {
		t.Error("edge radii: want 0 for one outcome, the whole simplex without data")
	}
}
