package main

import (
	"context"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"blackmass/feed/intake"
	"blackmass/feed/register"
	"blackmass/feed/sheet"
)

func newLotExportCmd(lo *lotOptions) *cobra.Command {
	var f register.Filter
	var csvPath, xlsxPath string
	var force bool
	cmd := &cobra.Command{
		Use:   "export --csv FILE | --xlsx FILE",
		Short: "Export the register, one row per lot (metals on their best evidence beside the estimate, value, reagents)",
		Example: "  blackmass lot export --csv lots.csv\n" +
			"  blackmass lot export --xlsx lots-2026-11.xlsx --from 2026-11-01 --to 2026-11-30",
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			if (csvPath == "") == (xlsxPath == "") {
				return usageError{errors.New("give one of --csv FILE or --xlsx FILE")}
			}
			return runLotExport(cmd.OutOrStdout(), lo, f, csvPath, xlsxPath, force)
		},
	}
	cmd.Flags().StringVar(&csvPath, "csv", "", "write CSV to this file")
	cmd.Flags().StringVar(&xlsxPath, "xlsx", "", "write an .xlsx workbook to this file")
	cmd.Flags().BoolVar(&force, "force", false, "overwrite an existing file")
	bindFilter(cmd, &f)
	return cmd
}

func runLotExport(w io.Writer, lo *lotOptions, f register.Filter, csvPath, xlsxPath string, force bool) error {
	if err := checkFilter(f); err != nil {
		return err
	}
	lots, err := lotQuery(lo, func(ctx context.Context, reg *register.Register) ([]register.Summary, error) {
		return reg.List(ctx, f)
	})
	if err != nil {
		return err
	}
	if csvPath != "" {
		err = writeNewFile(csvPath, force, func(out io.Writer) error { return writeRegisterCSV(out, lots) })
	} else {
		err = writeNewFile(xlsxPath, force, func(out io.Writer) error { return sheet.WriteRegister(out, lots) })
	}
	if err != nil {
		return err
	}
	fmt.Fprintf(w, "%d lots exported to %s%s\n", len(lots), csvPath, xlsxPath)
	return nil
}

// writeRegisterCSV writes the export's table as CSV, the header first.
func writeRegisterCSV(out io.Writer, lots []register.Summary) error {
	cols, rows := sheet.RegisterTable(lots)
	cw := csv.NewWriter(out)
	head := make([]string, len(cols))
	for i, c := range cols {
		head[i] = c.Head
	}
	if err := cw.Write(head); err != nil {
		return err
	}
	for _, r := range rows {
		rec := make([]string, len(r))
		for i, v := range r {
			switch x := v.(type) {
			case nil:
			case float64:
				rec[i] = strconv.FormatFloat(x, 'g', -1, 64)
			default:
				rec[i] = safeCSV(fmt.Sprint(x))
			}
		}
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// safeCSV keeps user text from being read as a formula by a spreadsheet opening the CSV.
func safeCSV(s string) string {
	if s != "" && strings.ContainsRune("=+-@\t\r", rune(s[0])) {
		if _, err := intake.ParseNumber(s, false); err != nil {
			return "'" + s
		}
	}
	return s
}
