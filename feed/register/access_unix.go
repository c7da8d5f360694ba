//go:build linux || darwin || freebsd || netbsd || openbsd || dragonfly

package register

import "syscall"

// wOK is W_OK of <unistd.h>: access(2) asks about writing.
const wOK = 2

// dirWritable reports whether files can be made in dir (false on a read-only mount too).
func dirWritable(dir string) bool { return syscall.Access(dir, wOK) == nil }
