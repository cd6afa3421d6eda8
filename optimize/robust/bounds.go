package robust

import "math"

// L1Miss is the distribution-free form of the bound of T. Weissman, E.
// Ordentlich, G. Seroussi, S. Verdú and M. J. Weinberger, Inequalities for
// the L1 deviation of the empirical distribution, HP Laboratories
// technical report HPL-2003-97 (R.1), 2003, Theorem 2.1: for the empirical
// distribution p̂ of n independent draws from a distribution p on k
// outcomes,
//
//	P(‖p̂ - p‖₁ >= ε)  <=  (2^k - 2)·exp(-n·φ(π_p)·ε²/4)  <=  (2^k - 2)·exp(-n·ε²/2),
//
// the second form because φ(π) >= 2 for every π in [0, 1/2], with equality
// at π = 1/2 (the paper's equation (8) and the remark after its equation
// (10); equation numbers checked against a transcription, not the report
// itself). L1Miss returns the right-hand side, (2^k - 2)·exp(-n·ε²/2),
// which may exceed 1. For k = 1 it is 0: a distribution on one outcome is
// known exactly.
func L1Miss(k, n int, eps float64) float64 {
	if k <= 1 {
		return 0
	}
	return math.Exp(logTwoPowMinusTwo(k) - float64(n)*eps*eps/2)
}

// L1Radius returns the smallest ε with L1Miss(k, n, ε) <= miss,
//
//	ε = sqrt(2·ln((2^k - 2)/miss) / n),
//
// capped at 2 (the diameter of the simplex in L1, so the whole simplex on
// the support). It is 0 for k <= 1 and 2 for n <= 0. miss must lie in
// (0, 1].
func L1Radius(k, n int, miss float64) float64 {
	switch {
	case k <= 1:
		return 0
	case n <= 0:
		return 2
	}
	l := logTwoPowMinusTwo(k) - math.Log(miss)
	if l <= 0 {
		return 0
	}
	return min(2, math.Sqrt(2*l/float64(n)))
}

// logTwoPowMinusTwo returns ln(2^k - 2) for k >= 2 without overflow:
// k·ln 2 + ln(1 - 2^(1-k)).
func logTwoPowMinusTwo(k int) float64 {
	return float64(k)*math.Ln2 + math.Log1p(-math.Exp2(float64(1-k)))
}

// KLMiss is the method-of-types bound on the divergence of the empirical
// distribution p̂ of n independent draws from a distribution p on k
// outcomes, in nats:
//
//	P(KL(p̂‖p) > ε)  <=  C(n+k-1, k-1)·exp(-n·ε).
//
// It is the proof of T. M. Cover and J. A. Thomas, Elements of Information
// Theory, 2nd ed., Wiley 2006, Theorem 11.2.1, with the exact number of
// types of denominator n, C(n+k-1, k-1), in place of its bound (n+1)^k
// (Theorem 11.1.1): each type class T(q) has probability at most
// exp(-n·KL(q‖p)) (Theorem 11.1.4), and the event is a union of type
// classes with KL(q‖p) > ε. (Theorem numbers from memory.) KLMiss may
// exceed 1; it is 0 for k = 1.
func KLMiss(k, n int, eps float64) float64 {
	if k <= 1 {
		return 0
	}
	return math.Exp(logTypes(k, n) - float64(n)*eps)
}

// KLRadius returns the smallest ε with KLMiss(k, n, ε) <= miss,
//
//	ε = (ln C(n+k-1, k-1) + ln(1/miss)) / n,
//
// in nats. It is 0 for k <= 1 and +Inf (no bound: the whole simplex on the
// support) for n <= 0. miss must lie in (0, 1].
func KLRadius(k, n int, miss float64) float64 {
	switch {
	case k <= 1:
		return 0
	case n <= 0:
		return math.Inf(1)
	}
	return max(0, (logTypes(k, n)-math.Log(miss))/float64(n))
}

// logTypes returns ln C(n+k-1, k-1), the logarithm of the number of types
// of denominator n on k outcomes.
func logTypes(k, n int) float64 {
	a, _ := math.Lgamma(float64(n + k))
	b, _ := math.Lgamma(float64(n + 1))
	c, _ := math.Lgamma(float64(k))
	return a - b - c
}
