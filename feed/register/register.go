// Package register keeps every lot a bench takes in, in one SQLite file: the manifest as
// received (bytes and hash) and as parsed, the settings and the report, the assays (every one,
// with the lab and date), the weighed black mass, and an audit trail. The schema is versioned by
// the migrations in migrations/ (SQLite's user_version); each write is one transaction; the file
// runs in WAL mode with a busy timeout so two processes can add lots at once.
package register

import (
	"context"
	"database/sql"
	"embed"
	"errors"
	"fmt"
	"io/fs"
	"slices"
	"strings"
	"time"

	"modernc.org/sqlite" // the pure-Go SQLite driver: no cgo
	sqlite3 "modernc.org/sqlite/lib"

	"blackmass/feed/intake"
)

//go:embed migrations/*.sql
var migrations embed.FS

// ApplicationID marks a blackmass register in the SQLite header (bytes 68–71): "BMAS".
const ApplicationID = 0x424D4153

// busyTimeout is how long a writer waits for another process's transaction to finish.
const busyTimeout = 10 * time.Second

// Register is an open lot register.
type Register struct {
	db       *sql.DB
	path     string
	readOnly bool // the file or its directory cannot be written: reads only
	now      func() time.Time
}

// ErrBusy is returned when another process held the register for longer than the busy timeout.
var ErrBusy = errors.New("the register is busy (another process is writing); try again")

// ErrReadOnly is returned for a write to a register opened read-only.
var ErrReadOnly = errors.New("read-only (the file or its directory cannot be written): nothing was recorded")

// wrap names the register's file in an error.
func (r *Register) wrap(err error) error {
	if err == nil {
		return nil
	}
	return fmt.Errorf("register %s: %w", r.path, err)
}

// Close closes the register.
func (r *Register) Close() error { return r.db.Close() }

// Path returns the register's file.
func (r *Register) Path() string { return r.path }

// SchemaVersion returns the register's schema version.
func (r *Register) SchemaVersion() (int, error) {
	var v int
	err := r.db.QueryRow("PRAGMA user_version").Scan(&v)
	return v, r.wrap(busy(err))
}

// migrationFiles lists the migrations in order.
func migrationFiles() ([]string, error) {
	names, err := fs.Glob(migrations, "migrations/*.sql")
	if err != nil {
		return nil, err
	}
	slices.Sort(names)
	return names, nil
}

// migrate applies the migrations after the register's version, up to version upTo (-1: all),
// each in its own transaction with the version bump.
func (r *Register) migrate(ctx context.Context, upTo int) error {
	names, err := migrationFiles()
	if err != nil {
		return err
	}
	have, err := r.SchemaVersion()
	if err != nil {
		return err
	}
	if have > len(names) {
		return fmt.Errorf("register %s: schema version %d is newer than this program knows (%d): use a newer blackmass", r.path, have, len(names))
	}
	last := len(names)
	if upTo >= 0 {
		last = min(last, upTo)
	}
	if have < last && r.readOnly {
		return r.wrap(fmt.Errorf("schema version %d, this program reads %d: open it once where it can be written "+
			"to bring it up to date; %w", have, len(names), ErrReadOnly))
	}
	for v := have + 1; v <= last; v++ {
		body, err := migrations.ReadFile(names[v-1])
		if err != nil {
			return err
		}
		err = r.tx(ctx, func(tx *sql.Tx) error {
			// Another process may have applied this migration since the version was read: the
			// write lock is held from here (BEGIN IMMEDIATE), so read the version again.
			var now int
			if err := tx.QueryRow("PRAGMA user_version").Scan(&now); err != nil {
				return err
			}
			if now >= v {
				return nil
			}
			if _, err := tx.Exec(string(body)); err != nil {
				return fmt.Errorf("migration %s: %w", names[v-1], err)
			}
			if after := afterMigration[v]; after != nil {
				if err := after(tx); err != nil {
					return fmt.Errorf("migration %s: %w", names[v-1], err)
				}
			}
			if _, err := tx.Exec(fmt.Sprintf("PRAGMA user_version = %d", v)); err != nil {
				return err
			}
			_, err := tx.Exec(fmt.Sprintf("PRAGMA application_id = %d", ApplicationID))
			return err
		})
		if err != nil {
			return fmt.Errorf("register %s: %w", r.path, err)
		}
	}
	return nil
}

// tx runs fn in one transaction: all of it is written, or none.
func (r *Register) tx(ctx context.Context, fn func(*sql.Tx) error) error {
	if r.readOnly {
		return ErrReadOnly
	}
	tx, err := r.db.BeginTx(ctx, nil)
	if err != nil {
		return busy(err)
	}
	if err := fn(tx); err != nil {
		_ = tx.Rollback()
		return busy(err)
	}
	return busy(tx.Commit())
}

// busy turns SQLite's busy error into ErrBusy.
func busy(err error) error {
	if err == nil || errors.Is(err, ErrBusy) {
		return err
	}
	var se *sqlite.Error
	if errors.As(err, &se) && se.Code()&0xff == sqlite3.SQLITE_BUSY ||
		strings.Contains(err.Error(), "SQLITE_BUSY") || strings.Contains(err.Error(), "database is locked") {
		return fmt.Errorf("%w: %v", ErrBusy, err)
	}
	return err
}

// date checks a YYYY-MM-DD date.
func date(s string) (string, error) {
	t, err := time.Parse(time.DateOnly, strings.TrimSpace(s))
	if pe := (*time.ParseError)(nil); errors.As(err, &pe) && strings.Contains(pe.Message, "out of range") {
		return "", fmt.Errorf("date %q: no such day in the calendar (want YYYY-MM-DD)", intake.Printable(s, 20))
	}
	if err != nil {
		return "", fmt.Errorf("date %q: want YYYY-MM-DD", intake.Printable(s, 20))
	}
	if t.Year() < 1990 || t.Year() > 2200 {
		return "", fmt.Errorf("date %q: year out of range", s)
	}
	return t.Format(time.DateOnly), nil
}
