//go:build !linux

package main

import (
	"errors"
	"os"
)

// openUnnamed is offered on Linux only; elsewhere a named temporary file is used.
func openUnnamed(string) (*os.File, bool) { return nil, false }

func linkUnnamed(*os.File, string) error { return errors.New("unnamed files are not offered here") }
