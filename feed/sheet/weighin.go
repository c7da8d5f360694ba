package sheet

import "fmt"

// weighIn is where the bench records container weights; live formulas compare the net weight
// with the estimate.
func (w *writer) weighIn() error {
	f, r := w.f, w.r
	if _, err := f.NewSheet(WeighIn); err != nil {
		return err
	}
	s := WeighIn
	_ = f.SetCellValue(s, "A1", "Weigh-in: record gross and tare per container after shredding and sieving")
	w.style(s, "A1", "A1", w.title)
	if err := w.header(s, 3, "container", "gross (kg)", "tare (kg)", "net (kg)"); err != nil {
		return err
	}
	const first, last = 4, 23
	for i := first; i <= last; i++ {
		// Blank until both weights are in: an empty row is not a weighing of 0 kg.
		w.formula(s, fmt.Sprintf("D%d", i), fmt.Sprintf(`IF(AND(ISNUMBER(B%d),ISNUMBER(C%d)),B%d-C%d,"")`, i, i, i, i))
	}
	_ = w.row(s, last+2, "total net (kg)")
	w.formula(s, fmt.Sprintf("D%d", last+2), fmt.Sprintf(`IF(COUNT(D%d:D%d)=0,"",SUM(D%d:D%d))`, first, last, first, last))
	_ = w.row(s, last+3, "estimated black mass P10 / P50 / P90 (kg)", r.BlackMassKg.P10, r.BlackMassKg.P50, r.BlackMassKg.P90)
	_ = w.row(s, last+4, "difference net − P50 (kg)")
	w.formula(s, fmt.Sprintf("D%d", last+4), fmt.Sprintf(`IF(D%d="","",D%d-C%d)`, last+2, last+2, last+3))
	_ = w.row(s, last+5, "net within P10–P90?")
	w.formula(s, fmt.Sprintf("D%d", last+5), fmt.Sprintf(`IF(D%d="","not weighed",IF(AND(D%d>=B%d,D%d<=D%d),"yes","NO: check the lot"))`, last+2, last+2, last+3, last+2, last+3))
	for i, label := range []string{"weighed on (date)", "weighed by (name)", "signature"} {
		row := last + 7 + 2*i
		_ = w.row(s, row, label)
		w.style(s, fmt.Sprintf("B%d", row), fmt.Sprintf("D%d", row), w.editText)
	}
	w.style(s, fmt.Sprintf("B%d", first), fmt.Sprintf("D%d", last+4), w.num3)
	w.style(s, fmt.Sprintf("A%d", first), fmt.Sprintf("C%d", last), w.edit) // the cells to fill in
	_ = f.SetColWidth(s, "A", "A", 40)
	_ = f.SetColWidth(s, "B", "D", 14)
	w.printSetup(s, false)
	return nil
}
