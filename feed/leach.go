package feed

// LeachOptions is filled in by the leach plan.
type LeachOptions struct{}

// LeachReport is filled in by the leach plan.
type LeachReport struct{}

func planLeach(s *Samples, opt LeachOptions, seed uint64) (*LeachReport, error) {
	return &LeachReport{}, nil
}
