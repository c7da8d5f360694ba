package assay

import (
	"errors"
	"math"

	"gonum.org/v1/gonum/mat"
)

// float64Epsilon is the float64 machine epsilon (2^-52). The stopping tolerance of the
// Lawson–Hanson iteration (Solving Least Squares Problems, 1974, ch. 23) scales with it and with
// the norms of A and b, the usual choice of NNLS implementations (from memory).
const float64Epsilon = 0x1p-52

// nnls solves min ‖A x − b‖₂ subject to x ≥ 0 by the active-set method of Lawson and Hanson
// (Solving Least Squares Problems, 1974, ch. 23), for small dense problems. Columns are scaled to
// unit norm internally; a zero column gets x = 0. It returns the solution and the residual norm.
//
// It follows the published algorithm's steps (Lawson & Hanson, Solving Least Squares Problems,
// 1974, ch. 23) in one function so that each can be checked against the book.
func nnls(A *mat.Dense, b []float64) ([]float64, float64, error) {
	m, n := A.Dims()
	if len(b) != m {
		return nil, 0, errors.New("nnls: dimension mismatch")
	}
	As, scale := unitColumns(A)
	bv := mat.NewVecDense(m, append([]float64(nil), b...))
	tol := 10 * float64(max(m, n)) * float64Epsilon * mat.Norm(As, 1) * mat.Norm(bv, 2)
	x := make([]float64, n)
	passive, blocked := make([]bool, n), make([]bool, n)
	w := make([]float64, n)
	gradient := func() {
		r := residual(As, x, b)
		for j := range n {
			w[j] = dot(mat.Col(nil, j, As), r)
		}
	}
	subSolve := func() []float64 {
		var idx []int
		for j := range n {
			if passive[j] {
				idx = append(idx, j)
			}
		}
		sub := mat.NewDense(m, len(idx), nil)
		for k, j := range idx {
			sub.SetCol(k, mat.Col(nil, j, As))
		}
		var zs mat.VecDense
		_ = zs.SolveVec(sub, bv) // a near-singular warning still leaves a usable least-squares z
		z := make([]float64, n)
		for k, j := range idx {
			z[j] = zs.AtVec(k)
		}
		return z
	}
	gradient()
	maxIter := 3*n + 10
	for iter := 0; ; iter++ {
		jmax, wmax := -1, tol
		for j := range n {
			if !passive[j] && !blocked[j] && scale[j] > 0 && w[j] > wmax {
				jmax, wmax = j, w[j]
			}
		}
		if jmax < 0 {
			break
		}
		if iter >= maxIter {
			return nil, 0, errors.New("nnls: iteration limit reached")
		}
		passive[jmax] = true
		z := subSolve()
		if z[jmax] <= 0 {
			passive[jmax], blocked[jmax] = false, true
			continue
		}
		clear(blocked)
		for inner := 0; ; inner++ {
			alpha, jmin := math.Inf(1), -1
			for j := range n {
				if passive[j] && z[j] <= 0 {
					if a := x[j] / (x[j] - z[j]); a < alpha {
						alpha, jmin = a, j
					}
				}
			}
			if jmin < 0 {
				copy(x, z)
				break
			}
			if inner > n+5 {
				return nil, 0, errors.New("nnls: inner loop did not converge")
			}
			for j := range n {
				x[j] += alpha * (z[j] - x[j])
				if passive[j] && (j == jmin || x[j] <= 0) {
					passive[j], x[j] = false, 0
				}
			}
			z = subSolve()
		}
		gradient()
	}
	for j := range n {
		if scale[j] > 0 {
			x[j] /= scale[j]
		}
		x[j] = max(x[j], 0)
	}
	r := residual(A, x, b)
	return x, math.Sqrt(dot(r, r)), nil
}

// unitColumns returns A with every non-zero column scaled to unit length, and the scales.
func unitColumns(A *mat.Dense) (*mat.Dense, []float64) {
	m, n := A.Dims()
	As := mat.DenseCopyOf(A)
	scale := make([]float64, n)
	for j := range n {
		col := mat.Col(nil, j, As)
		scale[j] = math.Sqrt(dot(col, col))
		if scale[j] > 0 {
			for i := range m {
				As.Set(i, j, As.At(i, j)/scale[j])
			}
		}
	}
	return As, scale
}

func residual(A mat.Matrix, x, b []float64) []float64 {
	m, n := A.Dims()
	r := make([]float64, m)
	for i := range m {
		s := b[i]
		for j := range n {
			s -= A.At(i, j) * x[j]
		}
		r[i] = s
	}
	return r
}

func dot(a, b []float64) float64 {
	s := 0.0
	for i := range a {
		s += a[i] * b[i]
	}
	return s
}
