package main

import (
	"bufio"
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/csv"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"text/tabwriter"
	"time"

	"github.com/spf13/cobra"
	"github.com/xuri/excelize/v2"

	"blackmass/feed/intake"
	"blackmass/feed/register"
	"blackmass/feed/run"
	"blackmass/feed/text"
	"blackmass/feed/value"
)

// maxManifestBytes bounds a manifest kept in the register (its bytes are stored).
const maxManifestBytes = 64 << 20

// lotOptions are the flags every lot command shares.
type lotOptions struct {
	dbPath string
	asJSON bool
}

func newLotCmd() *cobra.Command {
	lo := &lotOptions{}
	cmd := &cobra.Command{
		Use:   "lot",
		Short: "Keep every lot in the register: add, list, show, assay, weigh, export, totals, remove",
		Long: `The lot register is one SQLite file (default: ` + defaultDBHint() + `;
--db PATH or $BLACKMASS_DB to choose), created on first use. Each lot keeps its manifest as received,
the lines as parsed, the settings and report, every assay and weighing, and an audit trail.`,
		Example: `  blackmass lot add data/demo/lot-KR-2611.csv --lot KR-2611 --supplier "Larkfield Municipal Drop-off Yard" --received 2026-11-28
  blackmass lot assay KR-2611 testdata/assay-KR-2611.csv --lab "Tarn Valley Assay Lab" --date 2026-12-01
  blackmass lot weigh KR-2611 --mass "212 kg" --date 2026-12-01
  blackmass lot list --from 2026-11-01
  blackmass lot totals --month 2026-11`,
	}
	cmd.PersistentFlags().StringVar(&lo.dbPath, "db", "", "the register file (default "+defaultDBHint()+")")
	cmd.AddCommand(newLotAddCmd(lo), newLotListCmd(lo), newLotShowCmd(lo), newLotAssayCmd(lo), newLotWeighCmd(lo),
		newLotExportCmd(lo), newLotTotalsCmd(lo), newLotRemoveCmd(lo))
	return cmd
}

func defaultDBHint() string {
	if p, err := defaultDBPath(); err == nil {
		return p
	}
	return "the user data directory"
}

// defaultDBPath is $BLACKMASS_DB, else register.db in the user's data directory.
func defaultDBPath() (string, error) {
	if p := os.Getenv("BLACKMASS_DB"); p != "" {
		return p, nil
	}
	home, err := os.UserHomeDir()
	if err != nil {
		return "", err
	}
	dir := filepath.Join(home, ".local", "share")
	switch runtime.GOOS {
	case "windows":
		if d := os.Getenv("LocalAppData"); d != "" {
			dir = d
		}
	case "darwin":
		dir = filepath.Join(home, "Library", "Application Support")
	default:
		if d := os.Getenv("XDG_DATA_HOME"); d != "" {
			dir = d
		}
	}
	return filepath.Join(dir, "blackmass", "register.db"), nil
}

func (lo *lotOptions) open() (*register.Register, error) {
	path := lo.dbPath
	if path == "" {
		var err error
		if path, err = defaultDBPath(); err != nil {
			return nil, fmt.Errorf("no register path: %w (give --db PATH)", err)
		}
	}
	return register.Open(path)
}

func today() string { return time.Now().Format(time.DateOnly) }

// with opens the register, runs fn on it and closes it.
func (lo *lotOptions) with(fn func(*register.Register) error) error {
	reg, err := lo.open()
	if err != nil {
		return err
	}
	defer reg.Close()
	return fn(reg)
}

// lotQuery opens the register, asks it one thing and closes it.
func lotQuery[T any](lo *lotOptions, ask func(context.Context, *register.Register) (T, error)) (T, error) {
	var out T
	err := lo.with(func(reg *register.Register) (err error) {
		out, err = ask(context.Background(), reg)
		return err
	})
	return out, err
}

// bindFilter binds the flags that narrow a listing.
func bindFilter(cmd *cobra.Command, f *register.Filter) {
	cmd.Flags().StringVar(&f.Supplier, "supplier", "", "only this supplier")
	cmd.Flags().StringVar(&f.From, "from", "", "received on or after, YYYY-MM-DD")
	cmd.Flags().StringVar(&f.To, "to", "", "received on or before, YYYY-MM-DD")
	cmd.Flags().StringVar(&f.Chemistry, "chemistry", "", "only lots holding this chemistry (part of its name)")
}

func newLotAddCmd(lo *lotOptions) *cobra.Command {
	o := &estimateOptions{}
	var received string
	var replace bool
	cmd := &cobra.Command{
		Use:   "add MANIFEST --lot ID",
		Short: "Estimate a lot and record it in the register",
		Example: `  blackmass lot add lot.csv --lot KR-2702 --supplier "Fenwick Street recycling point" --received 2026-11-30
  blackmass lot add lot.xlsx --lot KR-2702 --replace --prices prices.csv`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runLotAdd(cmd.OutOrStdout(), lo, o, args[0], received, replace)
		},
	}
	o.bind(cmd)
	bindCalibrated(cmd, o, &lo.dbPath)
	cmd.Flags().StringVar(&received, "received", "", "date the lot was received, YYYY-MM-DD (default today)")
	cmd.Flags().BoolVar(&replace, "replace", false, "record a new version of a lot id already in the register (the old one is kept)")
	return cmd
}

func runLotAdd(w io.Writer, lo *lotOptions, o *estimateOptions, path, received string, replace bool) error {
	if o.lotID == "" {
		return usageError{errors.New("give the lot id with --lot")}
	}
	if received == "" {
		received = today()
	}
	if err := register.CheckLot(o.lotID, received); err != nil {
		return err
	}
	b, err := readCapped(path, maxManifestBytes)
	if err != nil {
		return err
	}
	o.keepLines = true
	t, ro, err := o.runOptions()
	if err != nil {
		return err
	}
	rep, err := run.Estimate(t, ro, run.Manifest{Name: path, R: bytes.NewReader(b)})
	if err != nil {
		return err
	}
	reg, err := lo.open()
	if err != nil {
		return err
	}
	defer reg.Close()
	sum := sha256.Sum256(b)
	v, err := reg.Add(context.Background(), register.Lot{ID: o.lotID, Supplier: o.supplier, Received: received, ToolVersion: version,
		ManifestName: filepath.Base(path), ManifestSHA256: hex.EncodeToString(sum[:]), Manifest: b, Settings: rep.Inputs, Report: rep}, replace)
	if err != nil {
		return err
	}
	fmt.Fprintf(w, "lot %s recorded (version %d) in %s: %d items, %.2f kWh, black mass %s kg (P50)\n", intake.Printable(o.lotID, 64), v, reg.Path(),
		rep.Lot.Items, rep.Lot.NameplateKWh, text.Num(rep.BlackMassKg.P50))
	fmt.Fprintln(w)
	text.Write(w, rep, "lot add", true) // the estimate's summary, with every warning and the caution
	return nil
}

// readCapped reads a file of at most max bytes.
func readCapped(path string, max int64) ([]byte, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	b, err := io.ReadAll(io.LimitReader(f, max+1))
	if err != nil {
		return nil, err
	}
	if int64(len(b)) > max {
		return nil, fmt.Errorf("%s: larger than %d MB", path, max>>20)
	}
	return b, nil
}

func newLotListCmd(lo *lotOptions) *cobra.Command {
	var f register.Filter
	cmd := &cobra.Command{
		Use:     "list",
		Short:   "List the lots in the register (filter by supplier, date received, chemistry)",
		Example: "  blackmass lot list --supplier \"Larkfield Municipal Drop-off Yard\" --from 2026-11-01 --to 2026-11-30 --chemistry LFP",
		Args:    cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			return runLotList(cmd.OutOrStdout(), lo, f)
		},
	}
	bindFilter(cmd, &f)
	cmd.Flags().BoolVar(&lo.asJSON, "json", false, "write JSON")
	return cmd
}

func runLotList(w io.Writer, lo *lotOptions, f register.Filter) error {
	lots, err := lotQuery(lo, func(ctx context.Context, reg *register.Register) ([]register.Summary, error) {
		return reg.List(ctx, f)
	})
	if err != nil {
		return err
	}
	if lo.asJSON {
		return writeJSON(w, lots)
	}
	if len(lots) == 0 {
		fmt.Fprintln(w, "no lots match")
		return nil
	}
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintf(tw, "lot\treceived\tsupplier\titems\tkWh\tblack mass kg\tCo kg\tNi kg\tLi kg\tassays\tweighed kg\tpayable\n")
	for _, l := range lots {
		pay := "—"
		if l.Payable != nil {
			pay = text.Money(*l.Payable) + " " + l.Currency
		}
		weighed := "—"
		if l.WeighedKg > 0 {
			weighed = text.Num(l.WeighedKg)
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%d\t%.1f\t%s\t%s\t%s\t%s\t%d\t%s\t%s\n", intake.Printable(l.ID, 40), l.Received, intake.Printable(l.Supplier, 40), l.Items,
			l.NameplateKWh, text.Num(l.BlackMassKg), text.Num(l.MetalsKg["Co"]), text.Num(l.MetalsKg["Ni"]), text.Num(l.MetalsKg["Li"]), l.Assays, weighed, pay)
	}
	return tw.Flush()
}

func newLotShowCmd(lo *lotOptions) *cobra.Command {
	cmd := &cobra.Command{
		Use:     "show ID",
		Short:   "Show what the register holds of a lot",
		Example: "  blackmass lot show KR-2611\n  blackmass lot show KR-2611 --json",
		Args:    cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runLotShow(cmd.OutOrStdout(), lo, args[0])
		},
	}
	cmd.Flags().BoolVar(&lo.asJSON, "json", false, "write JSON (with the full report)")
	return cmd
}

func runLotShow(w io.Writer, lo *lotOptions, id string) error {
	d, err := lotQuery(lo, func(ctx context.Context, reg *register.Register) (*register.Detail, error) {
		return reg.Show(ctx, id)
	})
	if err != nil {
		return err
	}
	if lo.asJSON {
		return writeJSON(w, d)
	}
	fmt.Fprintf(w, "blackmass lot %s (version %d of %v)\n", intake.Printable(d.ID, 64), d.Version, d.Versions)
	fmt.Fprintf(w, "received %s from %s; added %s by blackmass %s\n", d.Received, intake.Printable(d.Supplier, 80), d.AddedAt, d.ToolVersion)
	fmt.Fprintf(w, "manifest %s (sha256 %s…), %d lines, %d items, %.2f kWh\n", intake.Printable(d.ManifestName, 80), d.ManifestSHA256[:12], d.Lines, d.Items, d.NameplateKWh)
	fmt.Fprintf(w, "black mass %s kg (P50)\n", text.Num(d.BlackMassKg))
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "metal\testimate kg P50\tlatest assay wt%\t")
	for _, el := range value.PayableMetals() {
		a := "—"
		if v, ok := d.AssayWtPct[el]; ok {
			a = fmt.Sprintf("%.2f", v)
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t\n", el, text.Num(d.MetalsKg[el]), a)
	}
	tw.Flush()
	for _, a := range d.AssayList {
		fmt.Fprintf(w, "assay %d: %s, %s (%s)\n", a.ID, intake.Printable(a.Lab, 60), a.AssayedOn, intake.Printable(a.FileName, 60))
	}
	for _, wg := range d.Weighings {
		fmt.Fprintf(w, "weighed %s: %s kg %s\n", wg.On, text.Num(wg.Kg), intake.Printable(wg.Note, 80))
	}
	for _, a := range d.Audit {
		fmt.Fprintf(w, "  %s %s: %s\n", a.At, a.Action, intake.Printable(a.Detail, 200))
	}
	return nil
}

func newLotAssayCmd(lo *lotOptions) *cobra.Command {
	var lab, on string
	cmd := &cobra.Command{
		Use:     "assay ID ASSAY.csv --lab NAME",
		Short:   "Attach a lab assay to a lot (every assay is kept)",
		Example: `  blackmass lot assay KR-2611 testdata/assay-KR-2611.csv --lab "Tarn Valley Assay Lab" --date 2026-12-01`,
		Args:    cobra.ExactArgs(2),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runLotAssay(cmd.OutOrStdout(), lo, args[0], args[1], lab, on)
		},
	}
	cmd.Flags().StringVar(&lab, "lab", "", "the laboratory that made the assay")
	cmd.Flags().StringVar(&on, "date", "", "date of the assay, YYYY-MM-DD (default today)")
	return cmd
}

func runLotAssay(w io.Writer, lo *lotOptions, id, path, lab, on string) error {
	if on == "" {
		on = today()
	}
	b, err := readCapped(path, 1<<20)
	if err != nil {
		return err
	}
	a, err := intake.ReadAssay(bytes.NewReader(b), path)
	if err != nil {
		return err
	}
	reg, err := lo.open()
	if err != nil {
		return err
	}
	defer reg.Close()
	sum := sha256.Sum256(b)
	aid, err := reg.AddAssay(context.Background(), id, lab, on, filepath.Base(path), hex.EncodeToString(sum[:]), b, a)
	if err != nil {
		return err
	}
	fmt.Fprintf(w, "assay %d attached to lot %s (%d elements, %s, %s)\n", aid, intake.Printable(id, 64), len(a.Values), intake.Printable(lab, 60), on)
	return nil
}

func newLotWeighCmd(lo *lotOptions) *cobra.Command {
	var mass, on, note string
	cmd := &cobra.Command{
		Use:     "weigh ID --mass WEIGHT",
		Short:   "Record the weighed black mass of a lot",
		Example: `  blackmass lot weigh KR-2611 --mass "212 kg" --date 2026-12-01 --note "after sieving, dry"`,
		Args:    cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			kg, err := intake.ParseMassKg(mass)
			if err != nil {
				return fmt.Errorf("--mass %q: %w", intake.Printable(mass, 40), err)
			}
			if on == "" {
				on = today()
			}
			reg, err := lo.open()
			if err != nil {
				return err
			}
			defer reg.Close()
			if err := reg.Weigh(context.Background(), args[0], on, kg, note); err != nil {
				return err
			}
			fmt.Fprintf(cmd.OutOrStdout(), "lot %s weighed: %s kg on %s\n", intake.Printable(args[0], 64), text.Num(kg), on)
			return nil
		},
	}
	cmd.Flags().StringVar(&mass, "mass", "", "weighed black mass with its unit (kg, t, lb ...)")
	cmd.Flags().StringVar(&on, "date", "", "date weighed, YYYY-MM-DD (default today)")
	cmd.Flags().StringVar(&note, "note", "", "a note (moisture, sieve, scale)")
	return cmd
}

func newLotExportCmd(lo *lotOptions) *cobra.Command {
	var f register.Filter
	var csvPath, xlsxPath string
	var force bool
	cmd := &cobra.Command{
		Use:     "export --csv FILE | --xlsx FILE",
		Short:   "Export the register, one row per lot (key metals estimated and assayed, value, reagents)",
		Example: "  blackmass lot export --csv lots.csv\n  blackmass lot export --xlsx lots-2026-11.xlsx --from 2026-11-01 --to 2026-11-30",
		Args:    cobra.NoArgs,
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

// exportRows lays the lots out as rows: the header first.
func exportRows(lots []register.Summary) [][]any {
	head := []any{"lot", "version", "received", "supplier", "items", "nameplate kWh", "black mass kg (P50)", "weighed kg"}
	for _, el := range value.PayableMetals() {
		head = append(head, el+" kg (P50)")
	}
	for _, el := range value.PayableMetals() {
		head = append(head, el+" assay wt%")
	}
	head = append(head, "assay lab", "assays", "currency", "payable value (P50)", "reagent cost (P50)", "chemistries")
	rows := [][]any{head}
	for _, l := range lots {
		row := []any{l.ID, l.Version, l.Received, l.Supplier, l.Items, l.NameplateKWh, l.BlackMassKg, opt(l.WeighedKg > 0, l.WeighedKg)}
		for _, el := range value.PayableMetals() {
			row = append(row, l.MetalsKg[el])
		}
		for _, el := range value.PayableMetals() {
			v, ok := l.AssayWtPct[el]
			row = append(row, opt(ok, v))
		}
		row = append(row, l.AssayLab, l.Assays, l.Currency, optp(l.Payable), optp(l.ReagentCost), strings.Join(l.Chemistries, "; "))
		rows = append(rows, row)
	}
	return rows
}

func opt(ok bool, v float64) any {
	if !ok {
		return nil
	}
	return v
}

func optp(p *float64) any {
	if p == nil {
		return nil
	}
	return *p
}

func runLotExport(w io.Writer, lo *lotOptions, f register.Filter, csvPath, xlsxPath string, force bool) error {
	lots, err := lotQuery(lo, func(ctx context.Context, reg *register.Register) ([]register.Summary, error) {
		return reg.List(ctx, f)
	})
	if err != nil {
		return err
	}
	rows := exportRows(lots)
	if csvPath != "" {
		err = writeNewFile(csvPath, force, func(out io.Writer) error {
			cw := csv.NewWriter(out)
			for _, r := range rows {
				rec := make([]string, len(r))
				for i, v := range r {
					if v != nil {
						rec[i] = safeCSV(fmt.Sprint(v))
					}
				}
				if err := cw.Write(rec); err != nil {
					return err
				}
			}
			cw.Flush()
			return cw.Error()
		})
	} else {
		err = writeNewFile(xlsxPath, force, func(out io.Writer) error { return exportXLSX(out, rows) })
	}
	if err != nil {
		return err
	}
	fmt.Fprintf(w, "%d lots exported to %s%s\n", len(lots), csvPath, xlsxPath)
	return nil
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

func exportXLSX(out io.Writer, rows [][]any) error {
	f := excelize.NewFile()
	defer f.Close()
	const s = "Lots"
	_ = f.SetSheetName("Sheet1", s)
	sw, err := f.NewStreamWriter(s)
	if err != nil {
		return err
	}
	for i, r := range rows {
		for j, v := range r {
			if str, ok := v.(string); ok {
				r[j] = excelize.Cell{Value: str} // written as text, never as a formula
			}
		}
		cell, _ := excelize.CoordinatesToCellName(1, i+1)
		if err := sw.SetRow(cell, r); err != nil {
			return err
		}
	}
	if err := sw.Flush(); err != nil {
		return err
	}
	return f.Write(out)
}

func newLotTotalsCmd(lo *lotOptions) *cobra.Command {
	var month string
	cmd := &cobra.Command{
		Use:     "totals",
		Short:   "A month's intake by chemistry, the metal in the yard, and estimate against assay per supplier",
		Example: "  blackmass lot totals --month 2026-11",
		Args:    cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			if month == "" {
				month = time.Now().Format("2006-01")
			}
			return runLotTotals(cmd.OutOrStdout(), lo, month)
		},
	}
	cmd.Flags().StringVar(&month, "month", "", "the month, YYYY-MM (default this month)")
	cmd.Flags().BoolVar(&lo.asJSON, "json", false, "write JSON")
	return cmd
}

func runLotTotals(w io.Writer, lo *lotOptions, month string) error {
	t, err := lotQuery(lo, func(ctx context.Context, reg *register.Register) (*register.Totals, error) {
		return reg.MonthTotals(ctx, month)
	})
	if err != nil {
		return err
	}
	if lo.asJSON {
		return writeJSON(w, t)
	}
	fmt.Fprintf(w, "blackmass lot totals for %s\n\nreceived by chemistry:\n", t.Month)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "  chemistry\tlots\titems\tkWh\tblack mass kg (P50)")
	for _, c := range t.ByChemistry {
		fmt.Fprintf(tw, "  %s\t%d\t%d\t%.1f\t%s\n", c.Chemistry, c.Lots, c.Items, c.NameplateKWh, text.Num(c.BlackMassKg))
	}
	tw.Flush()
	fmt.Fprintln(w, "\nmetal in the yard (every lot in the register, P50 kg):")
	for _, el := range value.PayableMetals() {
		if kg, ok := t.InYardKg[el]; ok {
			fmt.Fprintf(w, "  %s %s\n", el, text.Num(kg))
		}
	}
	fmt.Fprintln(w, "\nestimate against assay, by supplier (mean assay − estimate, wt%):")
	if len(t.BySupplier) == 0 {
		fmt.Fprintln(w, "  no assayed lots this month")
	}
	for _, s := range t.BySupplier {
		var parts []string
		for _, el := range value.PayableMetals() {
			if d, ok := s.MeanDiffPct[el]; ok {
				parts = append(parts, fmt.Sprintf("%s %+.2f", el, d))
			}
		}
		fmt.Fprintf(w, "  %s (%d lots): %s\n", intake.Printable(s.Supplier, 60), s.AssayedLots, strings.Join(parts, ", "))
	}
	return nil
}

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
