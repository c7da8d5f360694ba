package calibrate

import (
	"errors"
	"fmt"
	"math"
	"time"
)

// MaxFactor bounds a factor's mean and sd: a factor beyond it says the model or the assays are
// broken (a unit slip kept in the fit), not that the model is a hundred times off.
const MaxFactor = 100

// FormatVersion is the version of the Calibration layout; a reader refuses any other.
const FormatVersion = 1

// Method names the fit, as recorded in every Calibration.
const Method = "conjugate Gaussian linear regression of measured kg on the estimate's parts " +
	"(factor prior N(1, relative spread²); noise: assay variance + estimate variance; leave-one-out outlier check)"

// Calibration is a fitted calibration: per element, the posterior of the factors on what reaches
// the black mass. It is plain data, safe to store as JSON and to read back.
type Calibration struct {
	Format    int       `json:"format"`  // FormatVersion
	Version   int       `json:"version"` // the register's number for it; 0 until saved
	CreatedAt time.Time `json:"created_at"`
	Method    string    `json:"method"`
	Settings  Settings  `json:"settings"`
	Lots      []string  `json:"lots"`               // the lots the fit used
	LeftOut   []string  `json:"left_out,omitempty"` // the lots it left out (excluded or outliers)
	Elements  []Element `json:"elements"`
}

// Settings are the options a calibration was fitted with.
type Settings struct {
	MinLots     int                `json:"min_lots"`
	MinCellLots float64            `json:"min_cell_lots"`
	PriorRelSD  map[string]float64 `json:"prior_rel_sd,omitempty"`
	OutlierZ    float64            `json:"outlier_z"`
	MaxRatio    float64            `json:"max_ratio"`
	Keep        []string           `json:"keep,omitempty"`
	Exclude     []string           `json:"exclude,omitempty"`
}

// Element is one element's factors and their posterior covariance.
type Element struct {
	Element string   `json:"element"`
	Lots    int      `json:"lots"`
	Factors []Factor `json:"factors"`
	// Covariance is the factors' posterior covariance, in the order of Factors.
	Covariance [][]float64 `json:"covariance"`
	// FamilyFactors are a fit by family alone (every format pooled), with their covariance:
	// they serve a format that has neither a factor of its own nor its family's pooled one in
	// Factors (a format no assayed lot held, in a family whose formats all have their own).
	FamilyFactors    []Factor    `json:"family_factors"`
	FamilyCovariance [][]float64 `json:"family_covariance"`
}

// The two sets of factors of an element.
const (
	mainSet   = 0
	familySet = 1
)

// set returns the factors and covariance of set i.
func (e *Element) set(i int) ([]Factor, [][]float64) {
	if i == familySet {
		return e.FamilyFactors, e.FamilyCovariance
	}
	return e.Factors, e.Covariance
}

// Factor is the multiplicative factor on what the model sends to the black mass from one
// family and format (Format "": every format of the family without a factor of its own).
type Factor struct {
	Family  string  `json:"family"`
	Format  string  `json:"format"`
	Mean    float64 `json:"mean"`
	SD      float64 `json:"sd"`
	PriorSD float64 `json:"prior_sd"`
	Lots    float64 `json:"lots"` // share-weighted number of lots behind it
}

// lookup returns the set and index of the factor that applies to a family and format: its own,
// its family's pooled one, or the family-only fit's; set −1 for none.
func (e *Element) lookup(family, format string) (set, idx int) {
	if i := factorIndex(e.Factors, family, format); i >= 0 {
		return mainSet, i
	}
	if i := factorIndex(e.FamilyFactors, family, ""); i >= 0 {
		return familySet, i
	}
	return -1, -1
}

// factorIndex returns the factor of fs for a family and format: its own, or its family's
// pooled one; -1 for none.
func factorIndex(fs []Factor, family, format string) int {
	pooled := -1
	for i, f := range fs {
		if f.Family != family {
			continue
		}
		if f.Format == format && format != "" {
			return i
		}
		if f.Format == "" {
			pooled = i
		}
	}
	return pooled
}

// element returns the element's factors, or nil.
func (c *Calibration) element(el string) *Element {
	for i := range c.Elements {
		if c.Elements[i].Element == el {
			return &c.Elements[i]
		}
	}
	return nil
}

// Check validates a calibration as read back: the layout version, finite positive factors, a
// symmetric positive definite covariance whose diagonal is the factors' variance.
func (c *Calibration) Check() error {
	if c.Format != FormatVersion {
		return fmt.Errorf("calibration format %d: this program reads format %d", c.Format, FormatVersion)
	}
	if c.CreatedAt.IsZero() {
		return errors.New("calibration: no creation time")
	}
	seen := map[string]bool{}
	for _, e := range c.Elements {
		if seen[e.Element] || e.Element == "" {
			return fmt.Errorf("calibration: element %q missing or given twice", e.Element)
		}
		seen[e.Element] = true
		if err := e.check(); err != nil {
			return fmt.Errorf("calibration: %s: %w", e.Element, err)
		}
	}
	return nil
}

func (e *Element) check() error {
	if err := checkSet(e.Factors, e.Covariance); err != nil {
		return err
	}
	for _, f := range e.FamilyFactors {
		if f.Format != "" {
			return fmt.Errorf("family factor %s has a format", cellName(cell{f.Family, f.Format}))
		}
	}
	if err := checkSet(e.FamilyFactors, e.FamilyCovariance); err != nil {
		return fmt.Errorf("family factors: %w", err)
	}
	return nil
}

// checkSet checks a set of factors and their covariance.
func checkSet(fs []Factor, cov [][]float64) error {
	k := len(fs)
	if k == 0 || len(cov) != k {
		return fmt.Errorf("%d factors, covariance of %d rows", k, len(cov))
	}
	cells := map[cell]bool{}
	for i, f := range fs {
		if cells[cell{f.Family, f.Format}] {
			return fmt.Errorf("factor %s given twice", cellName(cell{f.Family, f.Format}))
		}
		cells[cell{f.Family, f.Format}] = true
		if !(f.Mean > 0) || !(f.SD > 0) || f.Mean > MaxFactor || f.SD > MaxFactor {
			return fmt.Errorf("factor %s: mean %v, sd %v: want values above 0 and at most %d",
				cellName(cell{f.Family, f.Format}), f.Mean, f.SD, MaxFactor)
		}
		if len(cov[i]) != k {
			return fmt.Errorf("covariance row %d has %d values, want %d", i+1, len(cov[i]), k)
		}
		if d := cov[i][i]; math.Abs(d-f.SD*f.SD) > 1e-6*d {
			return fmt.Errorf("factor %s: sd %v disagrees with its variance %v", cellName(cell{f.Family, f.Format}), f.SD, d)
		}
		for j := range k {
			if a, b := cov[i][j], cov[j][i]; math.IsNaN(a) || math.Abs(a-b) > 1e-9*(math.Abs(a)+math.Abs(b)) {
				return fmt.Errorf("covariance not symmetric at (%d, %d)", i+1, j+1)
			}
		}
	}
	if _, ok := cholesky(cov); !ok {
		return errors.New("covariance not positive definite")
	}
	return nil
}

// cholesky returns the lower-triangular L with L·Lᵀ = a, row-major, or false if a is not
// positive definite.
func cholesky(a [][]float64) ([]float64, bool) {
	k := len(a)
	l := make([]float64, k*k)
	for i := range k {
		for j := 0; j <= i; j++ {
			s := a[i][j]
			for p := range j {
				s -= l[i*k+p] * l[j*k+p]
			}
			if i == j {
				if !(s > 0) {
					return nil, false
				}
				l[i*k+i] = math.Sqrt(s)
			} else {
				l[i*k+j] = s / l[j*k+j]
			}
		}
	}
	return l, true
}
