package assay

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// Ensure nnls matches a brute-force search over every active set (the KKT solution is the best
// unconstrained least-squares fit over some subset of columns with all coefficients positive).
func TestNNLSAgainstBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 9))
	for trial := range 3000 {
		m, n := 2+rng.IntN(7), 1+rng.IntN(6)
		A := mat.NewDense(m, n, nil)
		for i := range m {
			for j := range n {
				A.Set(i, j, rng.NormFloat64()*math.Pow(10, float64(rng.IntN(5)-2)))
			}
		}
		b := make([]float64, m)
		for i := range b {
			b[i] = rng.NormFloat64() * 10
		}
		x, res, err := nnls(A, b)
		if err != nil {
			t.Fatalf("trial %d: %v", trial, err)
		}
		best := math.Inf(1)
		for mask := 0; mask < 1<<n; mask++ {
			var idx []int
			for j := range n {
				if mask&(1<<j) != 0 {
					idx = append(idx, j)
				}
			}
			z := make([]float64, n)
			if len(idx) > 0 {
				sub := mat.NewDense(m, len(idx), nil)
				for k, j := range idx {
					sub.SetCol(k, mat.Col(nil, j, A))
				}
				var zs mat.VecDense
				if err := zs.SolveVec(sub, mat.NewVecDense(m, b)); err != nil {
					continue
				}
				ok := true
				for k, j := range idx {
					z[j] = zs.AtVec(k)
					if z[j] < 0 {
						ok = false
					}
				}
				if !ok {
					continue
				}
			}
			r := residual(A, z, b)
			best = math.Min(best, math.Sqrt(dot(r, r)))
		}
		for _, v := range x {
			if v < 0 {
				t.Fatalf("trial %d: negative coefficient %v", trial, v)
			}
		}
		if res > best+1e-7*(1+best) {
			t.Fatalf("trial %d (%dx%d): residual %.9g, brute force %.9g", trial, m, n, res, best)
		}
	}
	// Example from the API notes: NNLS x = [1.5 0 0], residual 1.2247.
	A := mat.NewDense(4, 3, []float64{1, 0, 1, 0, 1, 1, 1, 1, 0, 1, 0, 0})
	x, res, _ := nnls(A, []float64{2, -1, 1, 1.5})
	if math.Abs(x[0]-1.5) > 1e-9 || x[1] != 0 || x[2] != 0 || math.Abs(res-1.2247449) > 1e-6 {
		t.Errorf("nnls example: x=%v res=%v", x, res)
	}
}
