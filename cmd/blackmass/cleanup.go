package main

import (
	"os"
	"os/signal"
	"sync"
	"syscall"
)

// onSignal holds the temporary paths of the running commands: SIGINT or SIGTERM removes them
// all, then ends the process with 130. One watcher serves every path, so that no path is left
// because another watcher exited first.
var onSignal struct {
	once  sync.Once
	mu    sync.Mutex
	paths map[string]int
}

// removeOnSignal removes name (a file, or a directory with what it holds) if the process is
// interrupted; the returned function stops watching it.
func removeOnSignal(name string) func() {
	onSignal.once.Do(func() {
		onSignal.paths = map[string]int{}
		c := make(chan os.Signal, 1)
		signal.Notify(c, syscall.SIGINT, syscall.SIGTERM)
		go func() {
			<-c
			onSignal.mu.Lock()
			for p := range onSignal.paths {
				_ = os.RemoveAll(p)
			}
			os.Exit(130)
		}()
	})
	onSignal.mu.Lock()
	onSignal.paths[name]++
	onSignal.mu.Unlock()
	return func() {
		onSignal.mu.Lock()
		if onSignal.paths[name]--; onSignal.paths[name] <= 0 {
			delete(onSignal.paths, name)
		}
		onSignal.mu.Unlock()
	}
}

// scratchDir makes a private directory for a command's temporary files (the .xlsx reader's
// parts too large for memory), removed when done is called or the process is interrupted. If
// none can be made, dir is "" and the system's temporary directory is used.
func scratchDir() (dir string, done func()) {
	dir, err := os.MkdirTemp("", "blackmass-")
	if err != nil {
		return "", func() {}
	}
	stop := removeOnSignal(dir)
	return dir, func() {
		stop()
		_ = os.RemoveAll(dir)
	}
}
