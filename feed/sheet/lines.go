package sheet

import (
	"blackmass/feed/manifest"
	"fmt"
	"strings"

	"github.com/xuri/excelize/v2"
)

// MaxLines is the most manifest lines the Lines sheet holds: a sheet's 1,048,576 rows (ECMA-376
// Part 1, §18.3.1.73) less the header.
const MaxLines = 1_048_575

// lines makes the Lines sheet, empty, in its place among the tabs, with its page setup; its
// rows are streamed last (streamLines), once every formula elsewhere has been computed: the
// formula engine reads every sheet, and would parse the streamed rows back into memory.
func (w *writer) lines() error {
	f, r := w.f, w.r
	if r.Lot.Lines == 0 {
		return nil // a quote from an assay has no manifest lines
	}
	if len(r.Lines) > MaxLines {
		return fmt.Errorf("%d lines do not fit a sheet (at most %d)", len(r.Lines), MaxLines)
	}
	if _, err := f.NewSheet(Lines); err != nil {
		return err
	}
	w.pageSetup(Lines, true, false) // page setup goes in before the stream writer takes the sheet
	_ = f.SetDefinedName(&excelize.DefinedName{Name: "_xlnm.Print_Titles", RefersTo: "'" + Lines + "'!$A:$A,'" + Lines + "'!$1:$1", Scope: Lines})
	return nil
}

// streamLines writes the Lines sheet's rows through the stream writer.
func (w *writer) streamLines() error {
	f, r := w.f, w.r
	if r.Lot.Lines == 0 {
		return nil
	}
	sw, err := f.NewStreamWriter(Lines)
	if err != nil {
		return err
	}
	widths := []float64{12, 28, 16, 11, 11, 9, 9, 9, 8, 10, 28, 12, 6, 18, 12, 12, 10, 12, 12, 50}
	for i, wd := range widths {
		_ = sw.SetColWidth(i+1, i+1, wd)
	}
	_ = sw.SetColStyle(15, 19, w.num3)
	_ = sw.SetPanes(&excelize.Panes{Freeze: true, XSplit: 1, YSplit: 1, TopLeftCell: "B2", ActivePane: "bottomRight"})
	// The first columns are the manifest's own, headed so the sheet reads back as a manifest;
	// the rest are computed (manifest.DerivedLineColumns) and are read past.
	head := []any{"id", "description", "chemistry", "format", "capacity", "capacity basis", "voltage (V)", "cells per pack", "count", "mass (kg)", "notes", "application"}
	for _, h := range manifest.DerivedLineColumns {
		head = append(head, h)
	}
	if err := sw.SetRow("A1", head, excelize.RowOpts{StyleID: w.hdr, Height: 45}); err != nil {
		return err
	}
	for i, l := range r.Lines {
		flags := strings.Join(l.Flags, "; ")
		row := []any{text(l.ID), text(l.Description), text(l.ChemistryLabel), l.Format, l.CapacityGiven, l.CapacityBasis, opt(l.VoltageV),
			optInt(l.CellsPerItem), l.Count, opt(l.MeasuredMassKg), text(l.Notes), l.Application,
			l.Line, l.Chemistry, l.EnergyWhPerItem, l.ModelMassKgEach, opt(l.MeasuredWhPerKg), l.CathodeKg, l.BlackMassKg, flags}
		cell, _ := excelize.CoordinatesToCellName(1, i+2)
		if err := sw.SetRow(cell, row); err != nil {
			return err
		}
	}
	// A totals row from the report, in the computed columns only, so that the sheet read back
	// as a manifest passes over it (a row with nothing in the manifest's own columns).
	if len(r.Lines) > 0 {
		cell, _ := excelize.CoordinatesToCellName(13, len(r.Lines)+2)
		total := []any{"lot", fmt.Sprintf("%d items", r.Lot.Items), r.Lot.NameplateKWh * 1000, nil, nil, nil, r.BlackMassKg.P50,
			fmt.Sprintf("black mass P50 of the lot (P10 %.3f, P90 %.3f kg); lines above are most likely values", r.BlackMassKg.P10, r.BlackMassKg.P90)}
		if err := sw.SetRow(cell, total, excelize.RowOpts{StyleID: w.hdr}); err != nil {
			return err
		}
	}
	if len(r.Lines) > 0 {
		_ = f.AutoFilter(Lines, fmt.Sprintf("A1:T%d", len(r.Lines)+1), nil)
	}
	return sw.Flush()
}

// opt leaves a cell empty for a value that was not given (0).
func opt(v float64) any {
	if v == 0 {
		return nil
	}
	return v
}

func optInt(v int) any {
	if v == 0 {
		return nil
	}
	return v
}

// text is user text for a cell: as typed, and never read as a formula.
func text(s string) any { return excelize.Cell{Value: s} }
