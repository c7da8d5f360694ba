package run

import (
	"fmt"
	"strings"
	"time"

	"blackmass/feed/calibrate"
	"blackmass/feed/dist"
	"blackmass/feed/lot"
	"blackmass/feed/report"
)

// calibrationFactors draws a calibration's factors for the lot's (element, chemistry, format)
// keys from the run's drawer (each element from its own stream); nil without a calibration.
func calibrationFactors(c *calibrate.Calibration) lot.Factors {
	if c == nil {
		return nil
	}
	return func(keys []lot.FactorKey, d *dist.Drawer) [][]float64 {
		ck := make([]calibrate.Key, len(keys))
		for i, k := range keys {
			ck[i] = calibrate.Key{Element: k.Element, Family: k.Chemistry, Format: k.Format}
		}
		return c.Sampler(ck).DrawWith(d)
	}
}

// calibrated names the calibration a report was scaled by, in the report and first among its
// warnings, so that no calibrated figure is read as the model's own.
func calibrated(r *report.Report, o Options) {
	c := o.Calibration
	if c == nil {
		return
	}
	u := &report.CalibrationUse{Version: c.Version, Register: o.CalibrationSource, CreatedAt: c.CreatedAt.UTC(), Lots: len(c.Lots)}
	for _, e := range c.Elements {
		u.Elements = append(u.Elements, e.Element)
	}
	r.Calibration = u
	from := ""
	if u.Register != "" {
		from = " of register " + u.Register
	}
	note := fmt.Sprintf("calibrated: the elements' kg (%s) are multiplied by factors drawn from calibration %d%s, "+
		"fitted %s from %d assayed lots; the compounds, the black mass and the leach plan are the model's own",
		strings.Join(u.Elements, ", "), u.Version, from, u.CreatedAt.Format(time.DateOnly), u.Lots)
	r.Warnings = append([]string{note}, r.Warnings...)
}
