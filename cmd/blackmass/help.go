package main

import (
	"strings"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"
)

// flagGroups sorts the flags of the estimate-like commands for their help.
var flagGroups = []struct {
	title string
	names []string
}{
	{"Input", []string{"sheet", "unknown", "ignore-column", "catalog", "prior", "lot", "supplier", "received", "replace", "mass", "form"}},
	{"Model", []string{"seed", "samples", "candidates", "bootstrap", "flag-sigma", "calibrated", "db"}},
	{"Leach", []string{"plan", "route", "acid-strength", "acid-excess", "free-acid", "acid-molarity", "reductant", "h2o2-strength", "h2o2-excess",
		"h2o2-vol-pct", "reductant-g-per-l", "temperature", "pulp-density", "liquor-volume", "grow-volume", "extraction"}},
	{"Recovery", []string{"recover", "flowsheet", "volume", "recover-base", "mn-oxidant", "co-product", "ni-product", "li-product",
		"recover-prices"}},
	{"Costs and value", []string{"acid-price", "h2o2-price", "currency", "containers", "prices"}},
	{"Output", []string{"json", "quiet", "no-lines", "xlsx", "paper", "force"}},
}

func init() {
	cobra.AddTemplateFunc("groupedFlagUsages", groupedFlagUsages)
}

// groupedFlagUsages prints a command's own flags under the headings of flagGroups; flags no
// group names come last.
func groupedFlagUsages(cmd *cobra.Command) string {
	local := cmd.LocalFlags()
	seen := map[string]bool{}
	var b strings.Builder
	for _, g := range flagGroups {
		fs := pflag.NewFlagSet(g.title, pflag.ContinueOnError)
		for _, n := range g.names {
			if f := local.Lookup(n); f != nil && !f.Hidden {
				fs.AddFlag(f)
				seen[n] = true
			}
		}
		if fs.HasFlags() {
			b.WriteString(g.title + ":\n" + strings.TrimRight(fs.FlagUsages(), " \n") + "\n\n")
		}
	}
	rest := pflag.NewFlagSet("other", pflag.ContinueOnError)
	local.VisitAll(func(f *pflag.Flag) {
		if !seen[f.Name] && !f.Hidden {
			rest.AddFlag(f)
		}
	})
	if rest.HasFlags() {
		title := "Flags"
		if b.Len() > 0 {
			title = "Other flags"
		}
		b.WriteString(title + ":\n" + strings.TrimRight(rest.FlagUsages(), " \n") + "\n")
	}
	return strings.TrimRight(b.String(), "\n")
}

// usageTemplate is cobra's, with the local flags grouped.
const usageTemplate = `Usage:{{if .Runnable}}
  {{.UseLine}}{{end}}{{if .HasAvailableSubCommands}}
  {{.CommandPath}} [command]{{end}}{{if gt (len .Aliases) 0}}

Aliases:
  {{.NameAndAliases}}{{end}}{{if .HasExample}}

Examples:
{{.Example}}{{end}}{{if .HasAvailableSubCommands}}

Available Commands:{{range .Commands}}{{if (or .IsAvailableCommand (eq .Name "help"))}}
  {{rpad .Name .NamePadding }} {{.Short}}{{end}}{{end}}{{end}}{{if .HasAvailableLocalFlags}}

{{groupedFlagUsages .}}{{end}}{{if .HasAvailableInheritedFlags}}

Global Flags:
{{.InheritedFlags.FlagUsages | trimTrailingWhitespaces}}{{end}}{{if .HasAvailableSubCommands}}

Use "{{.CommandPath}} [command] --help" for more information about a command.{{end}}
`
