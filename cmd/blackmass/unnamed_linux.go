package main

import (
	"errors"
	"fmt"
	"io/fs"
	"os"

	"golang.org/x/sys/unix"
)

// openUnnamed opens a new, unnamed file in dir (O_TMPFILE, mode 0666 less the umask), which the
// kernel removes by itself if the process dies before linkUnnamed names it. ok is false where
// the file system or kernel does not offer it, or /proc is not mounted; the caller then uses a
// named temporary file.
func openUnnamed(dir string) (*os.File, bool) {
	if _, err := os.Stat("/proc/self/fd"); err != nil {
		return nil, false
	}
	fd, err := unix.Open(dir, unix.O_TMPFILE|unix.O_WRONLY|unix.O_CLOEXEC, 0o666)
	if err != nil {
		return nil, false
	}
	return os.NewFile(uintptr(fd), dir), true
}

// linkUnnamed gives the unnamed file f the name path; it fails with fs.ErrExist if path exists.
func linkUnnamed(f *os.File, path string) error {
	proc := fmt.Sprintf("/proc/self/fd/%d", f.Fd())
	err := unix.Linkat(unix.AT_FDCWD, proc, unix.AT_FDCWD, path, unix.AT_SYMLINK_FOLLOW)
	if errors.Is(err, unix.EEXIST) {
		return fs.ErrExist
	}
	return err
}
