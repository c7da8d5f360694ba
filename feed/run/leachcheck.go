package run

import "blackmass/feed/leach"

// validateLeach checks the leach settings; the planner holds their ranges.
func validateLeach(o *leach.Options) error {
	_ = o // MERGE: call o.Validate() once the planner has it
	return nil
}
