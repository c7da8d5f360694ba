//go:build linux || darwin || freebsd || netbsd || openbsd || dragonfly

package register

import (
	"context"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// A path that is not a regular file (a FIFO, a link to one, a directory, a device) is refused
// without being opened: a FIFO with no writer would block an open for ever.
func TestNotRegularRefused(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	fifo := filepath.Join(dir, "fifo.db")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Skip("no FIFO here:", err)
	}
	link := filepath.Join(dir, "link.db")
	if err := os.Symlink(fifo, link); err != nil {
		t.Fatal(err)
	}
	sub := filepath.Join(dir, "sub.db")
	if err := os.Mkdir(sub, 0o755); err != nil {
		t.Fatal(err)
	}
	// A FIFO where SQLite keeps its write-ahead log, beside a register.
	beside := filepath.Join(dir, "beside.db")
	r, err := Open(beside)
	if err != nil {
		t.Fatal(err)
	}
	_ = r.Close()
	if err := syscall.Mkfifo(beside+"-wal", 0o644); err != nil {
		t.Fatal(err)
	}
	for _, path := range []string{fifo, link, sub, os.DevNull, beside} {
		done := make(chan error, 1)
		go func() {
			r, err := Open(path)
			if err == nil {
				_ = r.Close()
			}
			done <- err
		}()
		select {
		case err := <-done:
			if err == nil || !strings.Contains(err.Error(), path) || !strings.Contains(err.Error(), "not a regular file") {
				t.Errorf("%s: %v", path, err)
			}
		case <-time.After(10 * time.Second):
			t.Fatalf("%s: Open still blocked after 10 s (it opened the FIFO)", path)
		}
	}
	// A link to a register is followed.
	r, real := openTemp(t)
	_ = r.Close()
	toReg := filepath.Join(dir, "to-register.db")
	if err := os.Symlink(real, toReg); err != nil {
		t.Fatal(err)
	}
	r, err = Open(toReg)
	if err != nil {
		t.Fatalf("link to a register: %v", err)
	}
	_ = r.Close()
}

// A register on a read-only file system can be listed; a write is refused with an error that
// names the file. The read-only mount is a bind mount in a private mount namespace (unshare).
func TestReadOnlyMount(t *testing.T) {
	t.Parallel()
	unshare, err := exec.LookPath("unshare")
	if err != nil {
		t.Skip("no unshare(1) to make a read-only mount")
	}
	dir := t.TempDir()
	path := filepath.Join(dir, "register.db")
	r, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := r.Add(context.Background(), sampleLot("KR-1", "s", "2026-11-02", 3), false); err != nil {
		t.Fatal(err)
	}
	_ = r.Close()
	script := `mount --bind "$1" "$1" && mount -o remount,bind,ro "$1" && shift && exec "$@"`
	cmd := exec.Command(unshare, "-rm", "sh", "-c", script, "sh", dir, os.Args[0], "-test.run=^$")
	cmd.Env = append(os.Environ(), readerEnv+"="+path)
	probe := exec.Command(unshare, "-rm", "sh", "-c", script, "sh", dir, "true")
	if out, err := probe.CombinedOutput(); err != nil {
		t.Skipf("cannot make a read-only mount here: %v %s", err, out)
	}
	out, err := cmd.CombinedOutput()
	if err != nil {
		t.Fatalf("reader on a read-only mount: %v\n%s", err, out)
	}
	got := string(out)
	if !strings.Contains(got, "lots 1 <nil>") {
		t.Errorf("listing on a read-only mount:\n%s", got)
	}
	if !strings.Contains(got, "add: register "+path) || !strings.Contains(got, "true") {
		t.Errorf("write on a read-only mount gave no clear error naming the file:\n%s", got)
	}
	t.Log(got)
}
