package main

import (
	"bufio"
	"context"
	"errors"
	"fmt"
	"strings"

	"github.com/spf13/cobra"

	"blackmass/feed/intake"
)

func newLotRemoveCmd(lo *lotOptions) *cobra.Command {
	var yes bool
	var reason string
	cmd := &cobra.Command{
		Use:     "remove ID",
		Short:   "Remove a lot from the register (asks to confirm; leaves an audit row)",
		Example: "  blackmass lot remove KR-2611 --reason \"entered twice\"\n  blackmass lot remove KR-2611 --yes",
		Args:    cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			id := args[0]
			if !yes {
				fmt.Fprintf(cmd.OutOrStdout(), "remove lot %s with its assays and weighings? type the lot id to confirm: ", intake.Printable(id, 64))
				line, _ := bufio.NewReader(cmd.InOrStdin()).ReadString('\n')
				if strings.TrimSpace(line) != id {
					return errors.New("not confirmed: nothing removed")
				}
			}
			reg, err := lo.open()
			if err != nil {
				return err
			}
			defer reg.Close()
			if err := reg.Remove(context.Background(), id, reason); err != nil {
				return err
			}
			fmt.Fprintf(cmd.OutOrStdout(), "lot %s removed (an audit row records it)\n", intake.Printable(id, 64))
			return nil
		},
	}
	cmd.Flags().BoolVar(&yes, "yes", false, "do not ask to confirm")
	cmd.Flags().StringVar(&reason, "reason", "", "why, for the audit trail")
	return cmd
}
