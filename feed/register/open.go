package register

import (
	"bytes"
	"context"
	"database/sql"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math/rand/v2"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"syscall"
	"time"
)

// Open opens the register at path, creating it (and its directory) on first use and bringing
// its schema up to date. A file that is not a blackmass register, or a damaged one, is refused
// and left as it was; so is a path that is not a regular file, which is never opened. A
// register that cannot be written (a read-only file, directory or mount) is opened for reading:
// its writes return ErrReadOnly. Several processes may open, and create, the same register at
// once: a writer that finds it busy waits, up to the busy timeout.
func Open(path string) (*Register, error) {
	exists, err := checkFile(path)
	if err != nil {
		return nil, err
	}
	readOnly := false
	if exists {
		readOnly = !canWrite(path)
	} else if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		return nil, fmt.Errorf("register %s: %w", path, err)
	}
	deadline := time.Now().Add(busyTimeout)
	for wait := 5 * time.Millisecond; ; wait = min(2*wait, 200*time.Millisecond) {
		r, err := open(path, readOnly)
		if err == nil || !errors.Is(err, ErrBusy) || time.Now().After(deadline) {
			return r, err
		}
		time.Sleep(wait/2 + rand.N(wait))
	}
}

// open makes one attempt at opening the register; an ErrBusy from it is worth another.
func open(path string, readOnly bool) (*Register, error) {
	if err := checkContent(path, readOnly); err != nil {
		return nil, err
	}
	r, err := connect(path, readOnly, false)
	if err != nil && readOnly && canImmutable(path) {
		// A register in WAL mode on a read-only file system: SQLite cannot make the shared-memory
		// file a reader needs, and with no write-ahead log the file alone holds everything.
		r, err = connect(path, readOnly, true)
	}
	if err != nil && readOnly && !canImmutable(path) {
		return nil, fmt.Errorf("%w (it cannot be written here, and the write-ahead log beside it needs that: "+
			"open it once where it can be written)", err)
	}
	if err != nil {
		return nil, err
	}
	if err := r.migrate(context.Background(), -1); err != nil {
		_ = r.db.Close()
		return nil, err
	}
	if err := r.checkTables(); err != nil {
		_ = r.db.Close()
		return nil, err
	}
	return r, nil
}

// connect opens the SQLite connection, runs the quick integrity check and, for writing, puts
// the file in WAL mode.
func connect(path string, readOnly, immutable bool) (*Register, error) {
	params := []string{busyPragma(), "_pragma=foreign_keys(1)"}
	switch {
	case immutable:
		params = append(params, "mode=ro", "immutable=1", "_pragma=query_only(1)")
	case readOnly:
		params = append(params, "mode=ro", "_pragma=query_only(1)")
	default:
		params = append(params, "_pragma=synchronous(NORMAL)", "_txlock=immediate")
	}
	uri, err := fileURI(path, params...)
	if err != nil {
		return nil, fmt.Errorf("register %s: %w", path, err)
	}
	db, err := sql.Open("sqlite", uri)
	if err != nil {
		return nil, fmt.Errorf("register %s: %w", path, err)
	}
	db.SetMaxOpenConns(1) // one connection: the pragmas above and the WAL mode hold for all of it
	r := &Register{db: db, path: path, readOnly: readOnly, now: func() time.Time { return time.Now().UTC() }}
	if err := r.check(); err != nil {
		_ = db.Close()
		return nil, err
	}
	if !readOnly {
		if _, err := db.Exec("PRAGMA journal_mode = WAL"); err != nil {
			_ = db.Close()
			return nil, r.wrap(busy(err))
		}
	}
	return r, nil
}

// check runs SQLite's quick integrity check.
func (r *Register) check() error {
	var res string
	if err := r.db.QueryRow("PRAGMA quick_check").Scan(&res); err != nil {
		if err := busy(err); errors.Is(err, ErrBusy) {
			return r.wrap(err)
		}
		return fmt.Errorf("register %s: cannot be read (%v); it was left untouched", r.path, err)
	}
	if res != "ok" {
		return fmt.Errorf("register %s: damaged (%s); restore it from a backup", r.path, res)
	}
	return nil
}

// checkTables refuses a register that lacks a table its migrations made.
func (r *Register) checkTables() error {
	names, err := migrationFiles()
	if err != nil {
		return err
	}
	create := regexp.MustCompile(`(?m)^CREATE TABLE (\w+)`)
	for _, name := range names {
		body, err := migrations.ReadFile(name)
		if err != nil {
			return err
		}
		for _, m := range create.FindAllSubmatch(body, -1) {
			var n int
			q := "SELECT count(*) FROM sqlite_master WHERE type = 'table' AND name = ?"
			if err := r.db.QueryRow(q, string(m[1])).Scan(&n); err != nil {
				return r.wrap(busy(err))
			}
			if n == 0 {
				return r.wrap(fmt.Errorf("damaged: its table %s is missing; restore it from a backup", m[1]))
			}
		}
	}
	return nil
}

// checkFile refuses, without opening it, a path that is not a regular file (a FIFO would block
// the open), and, reading only its header, a file that is not an SQLite database or is one of
// another application. It reports whether the file exists.
func checkFile(path string) (bool, error) {
	for _, side := range []string{"-wal", "-shm", "-journal"} { // the files SQLite keeps beside it
		if st, err := os.Stat(path + side); err == nil && !st.Mode().IsRegular() {
			return false, fmt.Errorf("register %s: %s is not a regular file (%s); remove it", path, path+side, kind(st.Mode()))
		}
	}
	st, err := os.Lstat(path)
	if errors.Is(err, fs.ErrNotExist) {
		return false, nil
	}
	if err == nil && st.Mode()&fs.ModeSymlink != 0 {
		st, err = os.Stat(path) // a link is followed to what it names
	}
	if err != nil {
		return false, fmt.Errorf("register %s: %w", path, err)
	}
	if !st.Mode().IsRegular() {
		return true, fmt.Errorf("register %s: not a regular file (%s); give the path of a register file", path, kind(st.Mode()))
	}
	f, err := os.OpenFile(path, os.O_RDONLY|syscall.O_NONBLOCK, 0)
	if err != nil {
		return true, fmt.Errorf("register %s: %w", path, err)
	}
	defer f.Close()
	if fst, err := f.Stat(); err != nil || !os.SameFile(st, fst) {
		return true, fmt.Errorf("register %s: changed while it was being checked; try again", path)
	}
	if st.Size() == 0 {
		return true, nil // an empty file: a new register
	}
	var head [100]byte
	if _, err := io.ReadFull(f, head[:]); err != nil || !bytes.Equal(head[:16], []byte("SQLite format 3\x00")) {
		return true, fmt.Errorf("register %s: not a blackmass register (not an SQLite database); it was left untouched", path)
	}
	if id := binary.BigEndian.Uint32(head[68:72]); id != ApplicationID && id != 0 {
		return true, fmt.Errorf("register %s: an SQLite database of another application (application id %#x), not a blackmass register; it was left untouched", path, id)
	}
	return true, nil
}

// kind names what a file that is not a regular file is.
func kind(m fs.FileMode) string {
	switch {
	case m.IsDir():
		return "a directory"
	case m&fs.ModeNamedPipe != 0:
		return "a named pipe"
	case m&fs.ModeSocket != 0:
		return "a socket"
	case m&fs.ModeDevice != 0:
		return "a device"
	}
	return "mode " + m.Type().String()
}

// checkContent looks, read-only, through SQLite at a file whose header has no application id:
// a register whose header still waits in the write-ahead log, one whose first migration never
// committed, or someone else's database, which is refused.
func checkContent(path string, readOnly bool) error {
	var head [72]byte
	f, err := os.OpenFile(path, os.O_RDONLY|syscall.O_NONBLOCK, 0)
	if errors.Is(err, fs.ErrNotExist) {
		return nil
	}
	if err != nil {
		return fmt.Errorf("register %s: %w", path, err)
	}
	_, err = io.ReadFull(f, head[:])
	_ = f.Close()
	if err != nil || binary.BigEndian.Uint32(head[68:72]) == ApplicationID {
		return nil // empty (a new register), or ours
	}
	params := []string{"mode=ro", busyPragma()}
	if readOnly && canImmutable(path) {
		params = append(params, "immutable=1")
	}
	uri, err := fileURI(path, params...)
	if err != nil {
		return fmt.Errorf("register %s: %w", path, err)
	}
	db, err := sql.Open("sqlite", uri)
	if err != nil {
		return fmt.Errorf("register %s: %w", path, err)
	}
	defer db.Close()
	// One statement, so one snapshot: the id and the tables a writer commits together.
	var tables int
	var id int64
	err = db.QueryRow(`SELECT (SELECT application_id FROM pragma_application_id),
		(SELECT count(*) FROM sqlite_master)`).Scan(&id, &tables)
	if id == ApplicationID {
		tables = 0
	}
	switch {
	case errors.Is(busy(err), ErrBusy):
		return fmt.Errorf("register %s: %w", path, busy(err))
	case err != nil:
		return fmt.Errorf("register %s: cannot be read (%v); it was left untouched", path, err)
	case tables > 0:
		return fmt.Errorf("register %s: an SQLite database with %d table(s) of its own, not a blackmass register; it was left untouched", path, tables)
	}
	return nil
}

// busyPragma is the URI parameter that has SQLite wait up to the busy timeout for a lock.
func busyPragma() string {
	return "_pragma=busy_timeout(" + strconv.Itoa(int(busyTimeout/time.Millisecond)) + ")"
}

// canWrite reports whether the register file and its directory (where SQLite keeps the
// write-ahead log beside it) can be written. Opening the file for writing changes nothing in it.
func canWrite(path string) bool {
	f, err := os.OpenFile(path, os.O_WRONLY|syscall.O_NONBLOCK, 0)
	if err != nil {
		return false
	}
	_ = f.Close()
	return dirWritable(filepath.Dir(path))
}

// canImmutable reports whether the file alone holds the whole register (no write-ahead log
// beside it), so that it may be read as immutable when SQLite cannot lock it.
func canImmutable(path string) bool {
	st, err := os.Stat(path + "-wal")
	return errors.Is(err, fs.ErrNotExist) || err == nil && st.Size() == 0
}

// fileURI is the SQLite URI (https://www.sqlite.org/uri.html) of exactly the file at path, with
// the given query parameters: the path is made absolute and every byte of it outside the
// unreserved characters of RFC 3986 is percent-encoded, so a '?', '#' or '%' in a file's name
// is part of the name, never a parameter, a fragment or an escape.
func fileURI(path string, params ...string) (string, error) {
	abs, err := filepath.Abs(path)
	if err != nil {
		return "", err
	}
	p := filepath.ToSlash(abs)
	if !strings.HasPrefix(p, "/") {
		p = "/" + p // a drive letter: file:///C:/...
	}
	var b strings.Builder
	b.WriteString("file://")
	for i := range len(p) {
		c := p[i]
		switch {
		case 'a' <= c && c <= 'z', 'A' <= c && c <= 'Z', '0' <= c && c <= '9', strings.IndexByte("-._~/", c) >= 0:
			b.WriteByte(c)
		default:
			fmt.Fprintf(&b, "%%%02X", c)
		}
	}
	if len(params) > 0 {
		b.WriteString("?" + strings.Join(params, "&"))
	}
	return b.String(), nil
}
