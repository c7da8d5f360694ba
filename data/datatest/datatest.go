// Package datatest gives tests reference tables of their own: the embedded tables with some
// files rewritten.
package datatest

import (
	"io/fs"
	"testing"
	"testing/fstest"

	"blackmass/data"
)

// Edited returns a copy of the embedded tables in which each file named in edit has its text
// replaced by edit[name](text). A name that is not a table, or an edit that changes nothing,
// fails the test.
func Edited(t testing.TB, edit map[string]func(string) string) fs.FS {
	t.Helper()
	own := fstest.MapFS{}
	if err := fs.WalkDir(data.FS, ".", func(path string, d fs.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		b, err := fs.ReadFile(data.FS, path)
		own[path] = &fstest.MapFile{Data: b}
		return err
	}); err != nil {
		t.Fatal(err)
	}
	for name, f := range edit {
		file, ok := own[name]
		if !ok {
			t.Fatalf("datatest: no table %s", name)
		}
		text := f(string(file.Data))
		if text == string(file.Data) {
			t.Fatalf("datatest: the edit of %s changed nothing", name)
		}
		own[name] = &fstest.MapFile{Data: []byte(text)}
	}
	return own
}
