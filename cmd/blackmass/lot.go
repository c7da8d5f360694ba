package main

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"runtime"
	"time"

	"github.com/spf13/cobra"

	"blackmass/feed/register"
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
--db PATH or $BLACKMASS_DB to choose), created by the first lot add; the other lot commands refuse a
register that does not exist. Each lot keeps its manifest as received, the lines as parsed, the
settings and report, every assay and weighing, and an audit trail.`,
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

// open opens the register, which must exist: only lot add creates one (create), so that a
// mistyped --db is named rather than answered from a new empty file.
func (lo *lotOptions) open() (*register.Register, error) { return openExisting(lo.dbPath) }

// create opens the register, creating it on first use.
func (lo *lotOptions) create() (*register.Register, error) {
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
