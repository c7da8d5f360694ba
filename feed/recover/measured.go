package recover

// Measured is a liquor as measured: its volume, each element's concentration, the Fe(III) part
// of the iron, the free acid and the anion.
type Measured struct {
	File     string             `json:"file"`
	VolumeL  float64            `json:"volume_l"`
	GPerL    map[string]float64 `json:"g_per_l"`
	Fe3GPerL float64            `json:"fe3_g_per_l,omitempty"`
	// FreeAcidMolPerL is mol/L of the anion's acid, H2SO4 or HCl.
	FreeAcidMolPerL float64 `json:"free_acid_mol_per_l"`
	Anion           string  `json:"anion"` // SO4 or Cl
}

// Samples is the measured liquor repeated over n samples (the Monte Carlo then draws only the
// stages' parameters). Its water is taken as the volume at water's density, as for a dilute
// liquor; the anion follows from the charge balance.
func (m *Measured) Samples(n int) Liquor {
	lq := Liquor{Anion: m.Anion, ElementKg: map[string][]float64{}}
	rep := func(v float64) []float64 {
		out := make([]float64, n)
		for i := range out {
			out[i] = v
		}
		return out
	}
	lq.VolumeL = rep(m.VolumeL)
	lq.WaterKg = rep(m.VolumeL * waterKgPerL)
	lq.FreeAcidMol = rep(m.FreeAcidMolPerL * m.VolumeL)
	for el, g := range m.GPerL {
		lq.ElementKg[el] = rep(g * m.VolumeL / 1000)
	}
	if m.Fe3GPerL > 0 {
		lq.Fe3Kg = rep(m.Fe3GPerL * m.VolumeL / 1000)
	}
	return lq
}
