package main

import (
	"crypto/rand"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"

	"blackmass/feed/report"
	"blackmass/feed/sheet"
)

// checkWritable refuses to go on, before any work is done, if the target's directory is missing
// or path exists in any form (a file, a symlink even dangling, a FIFO) and force is not set.
func checkWritable(path string, force bool) error {
	dir := filepath.Dir(path)
	if st, err := os.Stat(dir); err != nil || !st.IsDir() {
		return fmt.Errorf("%s: the directory %s does not exist", path, dir)
	}
	st, err := os.Lstat(path)
	switch {
	case err == nil && !st.Mode().IsRegular():
		return fmt.Errorf("%s exists and is not a regular file; not overwritten even with --force", path)
	case err == nil && !force:
		return fmt.Errorf("%s exists; pass --force to overwrite it", path)
	case err != nil && !errors.Is(err, fs.ErrNotExist):
		return fmt.Errorf("%s: %w", path, err)
	}
	return nil
}

// writeWorkbook writes the intake workbook so that no reader ever sees half a file and no file
// is replaced without force: a temporary file in the same directory (created with the user's
// umask), synced, then linked to path, which fails if path appeared meanwhile (the check and the
// write are one step), or renamed over it with force (keeping the old file's mode). The
// temporary file is removed on failure and on SIGINT or SIGTERM.
func writeWorkbook(path string, r *report.Report, force bool, paper int) error {
	return writeNewFile(path, force, func(w io.Writer) error { return sheet.WriteOn(w, r, paper) })
}

// writeNewFile writes a file the same way for every output: see writeWorkbook.
func writeNewFile(path string, force bool, write func(io.Writer) error) (err error) {
	if err := checkWritable(path, force); err != nil {
		return err
	}
	if f, ok := openUnnamed(filepath.Dir(path)); ok {
		return writeUnnamed(f, path, force, write)
	}
	tmpName, tmp, err := createTemp(filepath.Dir(path), filepath.Ext(path))
	if err != nil {
		return fmt.Errorf("%s: %w", path, err)
	}
	stop := removeOnSignal(tmpName)
	defer stop()
	defer func() {
		if err != nil {
			_ = os.Remove(tmpName)
		}
	}()
	if err = write(tmp); err != nil {
		_ = tmp.Close()
		return fmt.Errorf("%s: %w", path, err)
	}
	if err = tmp.Sync(); err != nil {
		_ = tmp.Close()
		return fmt.Errorf("%s: %w", path, err)
	}
	if err = tmp.Close(); err != nil {
		return fmt.Errorf("%s: %w", path, err)
	}
	if force {
		if st, serr := os.Stat(path); serr == nil {
			_ = os.Chmod(tmpName, st.Mode().Perm())
		}
		if err = os.Rename(tmpName, path); err != nil {
			return fmt.Errorf("%s: %w", path, err)
		}
		return nil
	}
	if err = os.Link(tmpName, path); err != nil {
		if errors.Is(err, fs.ErrExist) {
			return fmt.Errorf("%s appeared while the workbook was written; pass --force to overwrite it", path)
		}
		return fmt.Errorf("%s: %w", path, err)
	}
	_ = os.Remove(tmpName)
	return nil
}

// writeUnnamed writes through a file that has no name until it is complete (see openUnnamed),
// then gives it the target's name: a process killed at any point before leaves nothing behind.
func writeUnnamed(f *os.File, path string, force bool, write func(io.Writer) error) error {
	defer f.Close()
	if err := write(f); err != nil {
		return fmt.Errorf("%s: %w", path, err)
	}
	if err := f.Sync(); err != nil {
		return fmt.Errorf("%s: %w", path, err)
	}
	if !force {
		err := linkUnnamed(f, path)
		if errors.Is(err, fs.ErrExist) {
			return fmt.Errorf("%s appeared while the workbook was written; pass --force to overwrite it", path)
		}
		if err != nil {
			return fmt.Errorf("%s: %w", path, err)
		}
		return nil
	}
	// With force the old file is replaced in one rename: the complete file is first linked
	// under a temporary name, which exists only between the link and the rename.
	for range 10 {
		var b [8]byte
		_, _ = rand.Read(b[:])
		tmpName := filepath.Join(filepath.Dir(path), ".blackmass-"+hex.EncodeToString(b[:])+filepath.Ext(path))
		err := linkUnnamed(f, tmpName)
		if errors.Is(err, fs.ErrExist) {
			continue
		}
		if err != nil {
			return fmt.Errorf("%s: %w", path, err)
		}
		if st, serr := os.Stat(path); serr == nil {
			_ = os.Chmod(tmpName, st.Mode().Perm())
		}
		if err := os.Rename(tmpName, path); err != nil {
			_ = os.Remove(tmpName)
			return fmt.Errorf("%s: %w", path, err)
		}
		return nil
	}
	return fmt.Errorf("%s: cannot create a temporary name", path)
}

// createTemp creates a new file beside the target with mode 0666 less the umask (as any new
// file of the user's), under a random name.
func createTemp(dir, ext string) (string, *os.File, error) {
	var b [8]byte
	for range 10 {
		_, _ = rand.Read(b[:])
		name := filepath.Join(dir, ".blackmass-"+hex.EncodeToString(b[:])+ext)
		f, err := os.OpenFile(name, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o666)
		if errors.Is(err, fs.ErrExist) {
			continue
		}
		return name, f, err
	}
	return "", nil, errors.New("cannot create a temporary file")
}
