// Package manifesttest writes large manifests for benchmarks and load checks: every line
// distinct (its id, capacity, count and mass differ), over the formats and chemistries a mixed
// lot holds, so that no cache of alike lines answers for the reader or the model.
package manifesttest

import (
	"bufio"
	"encoding/csv"
	"fmt"
	"io"
	"strconv"
	"strings"
)

// Header is the manifests' header line.
const Header = "id,chemistry,format,capacity,cells_per_pack,count,mass"

type row struct {
	chemistry, format, layout string
	capBase, capStep          int // capacity of line i: capBase + (i mod 997)·capStep, in capUnit
	capUnit                   string
	massBase, massStep        int // mass of line i in g: massBase + (i mod 991)·massStep (0: no mass)
}

var rows = [...]row{
	{"LCO", "pouch", "", 2000, 1, "mAh", 40, 0},
	{"NMC811", "cylindrical", "", 4000, 1, "mAh", 60, 0},
	{"LFP", "pack", "15s4p", 900, 1, "Wh", 8500, 1},
	{"NMC622", "module", "12s2p", 4800, 1, "Wh", 30000, 1},
	{"Li-ion", "pouch", "", 2500, 1, "mAh", 0, 0},
}

// Write writes a manifest of n distinct lines to w.
func Write(w io.Writer, n int) error {
	bw := bufio.NewWriterSize(w, 1<<16)
	fmt.Fprintln(bw, Header)
	buf := make([]byte, 0, 96)
	for i := range n {
		r := rows[i%len(rows)]
		buf = append(buf[:0], 'L')
		buf = strconv.AppendInt(buf, int64(i), 10)
		buf = append(buf, ',')
		buf = append(buf, r.chemistry...)
		buf = append(buf, ',')
		buf = append(buf, r.format...)
		buf = append(buf, ',')
		buf = strconv.AppendInt(buf, int64(r.capBase+(i%997)*r.capStep), 10)
		buf = append(buf, ' ')
		buf = append(buf, r.capUnit...)
		buf = append(buf, ',')
		buf = append(buf, r.layout...)
		buf = append(buf, ',')
		buf = strconv.AppendInt(buf, int64(1+i%13), 10)
		buf = append(buf, ',')
		if r.massBase > 0 {
			buf = strconv.AppendInt(buf, int64(r.massBase+(i%991)*r.massStep), 10)
			buf = append(buf, " g"...)
		}
		buf = append(buf, '\n')
		if _, err := bw.Write(buf); err != nil {
			return err
		}
	}
	return bw.Flush()
}

// CSVFloor is the floor a whole estimate is measured against: it reads the records with
// encoding/csv and sums the number of the capacity column (the fourth), nothing more. It returns
// the records read and the sum.
func CSVFloor(r io.Reader) (int, float64, error) {
	cr := csv.NewReader(r)
	cr.ReuseRecord = true
	n, sum := 0, 0.0
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			return n, sum, nil
		}
		if err != nil {
			return n, sum, err
		}
		n++
		if n == 1 || len(rec) < 4 {
			continue
		}
		num, _, _ := strings.Cut(rec[3], " ")
		if v, err := strconv.ParseFloat(num, 64); err == nil {
			sum += v
		}
	}
}
