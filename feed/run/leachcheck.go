package run

import (
	"errors"

	"blackmass/feed/leach"
)

// leachOptionErr makes a leach option out of its range a run's option error.
func leachOptionErr(err error) error {
	if oe, ok := errors.AsType[*leach.OptionError](err); ok {
		return &OptionError{Option: oe.Option, Err: err}
	}
	return err
}
