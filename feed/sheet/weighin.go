package sheet

import "fmt"

// weighInWidths are the Weigh-in sheet's columns (A4 portrait at 100 %).
var weighInWidths = []float64{28, 11, 11, 11, 14, 12}

// weighIn is where the bench records container weights and moisture; live formulas give the net
// and dry weights and compare the net weight with the estimate.
func (w *writer) weighIn() error {
	r := w.r
	p, err := w.newPage(WeighIn, false, weighInWidths...)
	if err != nil {
		return err
	}
	s := WeighIn
	p.title("Weigh-in: record gross and tare per container after shredding and sieving")
	p.blank()
	head := p.header("container", "gross (kg)", "tare (kg)", "net (kg)", "moisture (wt%)", "dry net (kg)")
	w.printTitles(s, head, head)
	for col := 2; col <= 6; col++ {
		p.alignHead(col) // the columns take weights and moisture: numbers, aligned right
	}
	const first, last = 4, 23
	in := cellValue{fmt: fmtSig3, b: edit}
	for i := first; i <= last; i++ {
		p.add(cellValue{fmt: fmtText, b: edit}, in, in, nil, in)
		// Blank until both weights are in: an empty row is not a weighing of 0 kg.
		w.formula(s, fmt.Sprintf("D%d", i), fmt.Sprintf(`IF(AND(ISNUMBER(B%d),ISNUMBER(C%d)),B%d-C%d,"")`, i, i, i, i))
		w.formula(s, fmt.Sprintf("F%d", i), fmt.Sprintf(`IF(AND(ISNUMBER(D%d),ISNUMBER(E%d)),D%d*(1-E%d/100),"")`, i, i, i, i))
	}
	w.style(s, fmt.Sprintf("D%d", first), fmt.Sprintf("D%d", last), w.styleOf(plain, fmtSig3))
	w.style(s, fmt.Sprintf("F%d", first), fmt.Sprintf("F%d", last), w.styleOf(plain, fmtSig3))
	p.blank()
	tot := p.add(boldText("total net (kg)"))
	w.formula(s, fmt.Sprintf("D%d", tot), fmt.Sprintf(`IF(COUNT(D%d:D%d)=0,"",SUM(D%d:D%d))`, first, last, first, last))
	w.formula(s, fmt.Sprintf("F%d", tot), fmt.Sprintf(`IF(COUNT(F%d:F%d)=0,"",SUM(F%d:F%d))`, first, last, first, last))
	w.style(s, fmt.Sprintf("D%d", tot), fmt.Sprintf("F%d", tot), w.styleOf(bold, fmtSig3))
	est := p.add(boldText("estimated black mass P10 / P50 / P90 (kg)"), r.BlackMassKg.P10, r.BlackMassKg.P50, r.BlackMassKg.P90)
	diff := p.add(boldText("difference net − P50 (kg)"))
	w.formula(s, fmt.Sprintf("D%d", diff), fmt.Sprintf(`IF(D%d="","",D%d-C%d)`, tot, tot, est))
	w.style(s, fmt.Sprintf("D%d", diff), fmt.Sprintf("D%d", diff), w.styleOf(plain, fmtSig3))
	within := p.add(boldText("net within P10–P90?"))
	w.formula(s, fmt.Sprintf("D%d", within), fmt.Sprintf(`IF(D%d="","not weighed",IF(AND(D%d>=B%d,D%d<=D%d),"yes","NO: check the lot"))`, tot, tot, est, tot, est))
	a, b := fmt.Sprintf("D%d", within), fmt.Sprintf("F%d", within)
	_ = w.f.MergeCell(s, a, b)
	w.style(s, a, b, w.styleOf(bold, ""))
	p.add(note("Where the moisture was measured, compare the dry net weight too: the estimate holds no water."))
	for _, label := range []string{"weighed on (date)", "weighed by (name)", "signature"} {
		p.blank()
		f := fmtText
		if label == "weighed on (date)" {
			f = fmtDate
		}
		row := p.add(boldText(label))
		w.style(s, fmt.Sprintf("B%d", row), fmt.Sprintf("D%d", row), w.styleOf(edit, f))
	}
	return nil
}
