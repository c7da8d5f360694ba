package main

import (
	"go/parser"
	"go/token"
	"io/fs"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"
)

// allowedImports is the architecture as a table: each package of the module and the packages
// of the module it may import. Data flows one way, from the manifest through the stages to the
// renderers and the register; no package imports one above it, and no package imports its
// parent. DEVELOPERS.md's architecture table says the same in words.
var allowedImports = map[string][]string{
	"data":                       {},
	"data/datatest":              {"data"},
	"cathode":                    {"data"},
	"cathode/cathodetest":        {"cathode", "data"},
	"feed/dist":                  {},
	"feed/manifest":              {"cathode"},
	"feed/manifest/manifesttest": {},
	"feed/leach":                 {"cathode", "data", "feed/dist"},
	"feed/lot":                   {"cathode", "data", "feed/dist", "feed/manifest"},
	"feed/assay":                 {"cathode", "data", "feed/dist", "feed/leach"},
	"feed/value":                 {"cathode", "feed/dist", "feed/leach"},
	"feed/recover":               {"cathode", "data", "feed/dist"},
	"feed/calibrate":             {"feed/dist"},
	"feed/intake":                {"cathode", "data", "feed/assay", "feed/manifest", "feed/value", "feed/recover"},
	"feed/report": {"feed/assay", "feed/dist", "feed/leach", "feed/lot", "feed/value", "feed/recover",
		"feed/calibrate"},
	"feed/run": {"cathode", "data", "feed/assay", "feed/dist", "feed/intake", "feed/leach", "feed/lot",
		"feed/manifest", "feed/report", "feed/value", "feed/recover", "feed/calibrate"},
	"feed/text": {"cathode", "feed/assay", "feed/dist", "feed/intake", "feed/leach", "feed/lot", "feed/report",
		"feed/value", "feed/recover", "feed/calibrate"},
	"feed/sheet": {"cathode", "feed/assay", "feed/dist", "feed/intake", "feed/leach", "feed/lot", "feed/manifest",
		"feed/report", "feed/value", "feed/recover", "feed/calibrate", "feed/register"},
	"feed/register": {"cathode", "feed/assay", "feed/dist", "feed/intake", "feed/lot", "feed/report", "feed/value",
		"feed/calibrate"},
	"cmd/blackmass": {"*"},
}

// The module's import arrows are those of the table: every package is in it, and each imports
// only what its row allows (tests may import more, to build their inputs).
func TestImportDirection(t *testing.T) {
	t.Parallel()
	root := filepath.Join("..", "..")
	found := map[string]bool{}
	fset := token.NewFileSet()
	err := filepath.WalkDir(root, func(path string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if d.IsDir() && (strings.HasPrefix(d.Name(), ".") || d.Name() == "testdata") && path != root {
			return filepath.SkipDir
		}
		if d.IsDir() || !strings.HasSuffix(path, ".go") || strings.HasSuffix(path, "_test.go") {
			return nil
		}
		rel, _ := filepath.Rel(root, filepath.Dir(path))
		pkg := filepath.ToSlash(rel)
		found[pkg] = true
		allowed, ok := allowedImports[pkg]
		if !ok {
			t.Errorf("package %s is not in the architecture table", pkg)
			return nil
		}
		f, err := parser.ParseFile(fset, path, nil, parser.ImportsOnly)
		if err != nil {
			return err
		}
		for _, imp := range f.Imports {
			p, _ := strconv.Unquote(imp.Path.Value)
			dep, ok := strings.CutPrefix(p, "blackmass/")
			if !ok || slices.Contains(allowed, "*") {
				continue
			}
			if !slices.Contains(allowed, dep) {
				t.Errorf("%s imports %s, which its row does not allow", filepath.ToSlash(path), dep)
			}
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	for pkg := range allowedImports {
		if !found[pkg] && pkg != "feed/calibrate" {
			t.Errorf("the architecture table lists %s, which the tree does not hold", pkg)
		}
	}
}
