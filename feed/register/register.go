// Package register keeps every lot a bench takes in, in one SQLite file: the manifest as
// received (bytes and hash) and as parsed, the settings and the report, the assays (every one,
// with the lab and date), the weighed black mass, and an audit trail. The schema is versioned by
// the migrations in migrations/ (SQLite's user_version); each write is one transaction; the file
// runs in WAL mode with a busy timeout so two processes can add lots at once.
package register

import (
	"bytes"
	"context"
	"database/sql"
	"embed"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"time"

	_ "modernc.org/sqlite" // the pure-Go SQLite driver: no cgo

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
	db   *sql.DB
	path string
	now  func() time.Time
}

// ErrBusy is returned when another process held the register for longer than the busy timeout.
var ErrBusy = errors.New("the register is busy (another process is writing); try again")

// Open opens the register at path, creating it (and its directory) on first use and bringing
// its schema up to date. A file that is not a blackmass register, or a damaged one, is refused
// and left as it was.
func Open(path string) (*Register, error) {
	if err := checkFile(path); err != nil {
		return nil, err
	}
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		return nil, fmt.Errorf("register %s: %w", path, err)
	}
	dsn := "file:" + path + "?_pragma=busy_timeout(" + strconv.Itoa(int(busyTimeout/time.Millisecond)) + ")" +
		"&_pragma=journal_mode(WAL)&_pragma=foreign_keys(1)&_pragma=synchronous(NORMAL)&_txlock=immediate"
	db, err := sql.Open("sqlite", dsn)
	if err != nil {
		return nil, fmt.Errorf("register %s: %w", path, err)
	}
	r := &Register{db: db, path: path, now: func() time.Time { return time.Now().UTC() }}
	if err := r.check(); err != nil {
		_ = db.Close()
		return nil, err
	}
	if err := r.migrate(context.Background(), -1); err != nil {
		_ = db.Close()
		return nil, err
	}
	return r, nil
}

// Close closes the register.
func (r *Register) Close() error { return r.db.Close() }

// Path returns the register's file.
func (r *Register) Path() string { return r.path }

// checkFile refuses, without opening it for writing, a file that exists and is not a blackmass
// register: not SQLite at all, or SQLite of another application.
func checkFile(path string) error {
	f, err := os.Open(path)
	if errors.Is(err, fs.ErrNotExist) {
		return nil
	}
	if err != nil {
		return fmt.Errorf("register %s: %w", path, err)
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil {
		return fmt.Errorf("register %s: %w", path, err)
	}
	if !st.Mode().IsRegular() {
		return fmt.Errorf("register %s: not a regular file", path)
	}
	if st.Size() == 0 {
		return nil // an empty file: a new register
	}
	var head [100]byte
	if _, err := io.ReadFull(f, head[:]); err != nil || !bytes.Equal(head[:16], []byte("SQLite format 3\x00")) {
		return fmt.Errorf("register %s: not a blackmass register (not an SQLite database); it was left untouched", path)
	}
	switch id := binary.BigEndian.Uint32(head[68:72]); {
	case id == ApplicationID:
		return nil
	case id != 0:
		return fmt.Errorf("register %s: an SQLite database of another application (application id %#x), not a blackmass register; it was left untouched", path, id)
	}
	// No application id in the file's header: a register whose header still waits in the
	// write-ahead log, one whose first migration never committed, or someone else's database.
	// Look through SQLite, read-only.
	db, err := sql.Open("sqlite", "file:"+path+"?mode=ro")
	if err != nil {
		return fmt.Errorf("register %s: %w", path, err)
	}
	defer db.Close()
	var tables int
	var id int64
	if err := db.QueryRow("PRAGMA application_id").Scan(&id); err != nil {
		return fmt.Errorf("register %s: cannot be read (%v); it was left untouched", path, err)
	}
	if id == ApplicationID {
		return nil
	}
	if err := db.QueryRow("SELECT count(*) FROM sqlite_master").Scan(&tables); err != nil {
		return fmt.Errorf("register %s: cannot be read (%v); it was left untouched", path, err)
	}
	if tables > 0 {
		return fmt.Errorf("register %s: an SQLite database with %d table(s) of its own, not a blackmass register; it was left untouched", path, tables)
	}
	return nil
}

// check runs SQLite's quick integrity check.
func (r *Register) check() error {
	var res string
	if err := r.db.QueryRow("PRAGMA quick_check").Scan(&res); err != nil {
		return fmt.Errorf("register %s: cannot be read (%v); it was left untouched", r.path, err)
	}
	if res != "ok" {
		return fmt.Errorf("register %s: damaged (%s); restore it from a backup", r.path, res)
	}
	return nil
}

// SchemaVersion returns the register's schema version.
func (r *Register) SchemaVersion() (int, error) {
	var v int
	err := r.db.QueryRow("PRAGMA user_version").Scan(&v)
	return v, err
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
		return fmt.Errorf("register %s: %w", r.path, err)
	}
	if have > len(names) {
		return fmt.Errorf("register %s: schema version %d is newer than this program knows (%d): use a newer blackmass", r.path, have, len(names))
	}
	for v := have + 1; v <= len(names) && (upTo < 0 || v <= upTo); v++ {
		body, err := migrations.ReadFile(names[v-1])
		if err != nil {
			return err
		}
		err = r.tx(ctx, func(tx *sql.Tx) error {
			if _, err := tx.Exec(string(body)); err != nil {
				return fmt.Errorf("migration %s: %w", names[v-1], err)
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
	if err != nil && (strings.Contains(err.Error(), "SQLITE_BUSY") || strings.Contains(err.Error(), "database is locked")) {
		return fmt.Errorf("%w: %v", ErrBusy, err)
	}
	return err
}

// date checks a YYYY-MM-DD date.
func date(s string) (string, error) {
	t, err := time.Parse(time.DateOnly, strings.TrimSpace(s))
	if err != nil {
		return "", fmt.Errorf("date %q: want YYYY-MM-DD", intake.Printable(s, 20))
	}
	if t.Year() < 1990 || t.Year() > 2200 {
		return "", fmt.Errorf("date %q: year out of range", s)
	}
	return t.Format(time.DateOnly), nil
}
