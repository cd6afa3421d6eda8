package condition

import (
	"gonum.org/v1/gonum/mat"
)

func rowOf(a *mat.Dense, s int) []float64 {
	_, n := a.Dims()
	r := make([]float64, n)
	for j := range n {
		r[j] = max(0, a.At(s, j))
	}
	return r
}

func scale(q [][]float64, t float64) *mat.Dense {
	n := len(q)
	a := mat.NewDense(n, n, nil)
	for i := range n {
		for j := range n {
			a.Set(i, j, q[i][j]*t)
		}
	}
	return a
}

func expm(a *mat.Dense) *mat.Dense {
	var e mat.Dense
	e.Exp(a)
	return &e
}

// mulInto sets dst = a·b for n×n row-major matrices.
func mulInto(dst, a, b []float64, n int) {
	for i := range n {
		row := dst[i*n : (i+1)*n]
		clear(row)
		for k := range n {
			aik := a[i*n+k]
			if aik == 0 {
				continue
			}
			bk := b[k*n : (k+1)*n]
			for j := range n {
				row[j] += aik * bk[j]
			}
		}
	}
}

// mulTransBInto sets dst = a·bᵀ.
func mulTransBInto(dst, a, b []float64, n int) {
	for i := range n {
		for j := range n {
			s := 0.0
			for k := range n {
				s += a[i*n+k] * b[j*n+k]
			}
			dst[i*n+j] = s
		}
	}
}

// mulTransAAdd adds aᵀ·b to dst.
func mulTransAAdd(dst, a, b []float64, n int) {
	for k := range n {
		for i := range n {
			aki := a[k*n+i]
			if aki == 0 {
				continue
			}
			for j := range n {
				dst[i*n+j] += aki * b[k*n+j]
			}
		}
	}
}

// frechet returns L(B, E), the Fréchet derivative of exp at B in the
// direction E: the upper-right block of exp([[B, E], [0, B]]).
func frechet(b *mat.Dense, e *mat.Dense) *mat.Dense {
	n, _ := b.Dims()
	big := mat.NewDense(2*n, 2*n, nil)
	for i := range n {
		for j := range n {
			big.Set(i, j, b.At(i, j))
			big.Set(n+i, n+j, b.At(i, j))
			big.Set(i, n+j, e.At(i, j))
		}
	}
	x := expm(big)
	out := mat.NewDense(n, n, nil)
	for i := range n {
		for j := range n {
			out.Set(i, j, x.At(i, n+j))
		}
	}
	return out
}
