package main

import (
	"github.com/spf13/cobra"

	"blackmass/feed"
)

type leachFlags struct{}

func (l *leachFlags) bind(cmd *cobra.Command) {}

func (l *leachFlags) options() (*feed.LeachOptions, error) { return nil, nil }
