package report

import (
	"bufio"
	"bytes"
	"encoding/json"
	"io"

	"blackmass/feed/lot"
)

// WriteJSON writes the report as indented JSON, with its per-line results one compact object
// to a line inside the "lines" array. A report of a million lines is thus streamed line by line
// instead of being built, and indented, as one buffer the size of the output; and each line of a
// manifest stays one line of the JSON, for grep and diff.
func (r *Report) WriteJSON(w io.Writer) error {
	head := *r
	head.Lines, head.KeptLines = nil, nil
	b, err := json.MarshalIndent(&head, "", "  ")
	if err != nil {
		return err
	}
	bw := bufio.NewWriterSize(w, 64<<10)
	n := r.LineCount()
	if n == 0 || !bytes.HasSuffix(b, []byte("\n}")) {
		bw.Write(b)
		bw.WriteByte('\n')
		return bw.Flush()
	}
	bw.Write(b[:len(b)-2])
	bw.WriteString(",\n  \"lines\": [\n")
	err = r.WriteLines(func(b []byte, i int, l lot.LineResult) ([]byte, error) {
		b, err := l.AppendJSON(append(b, "    "...))
		if err != nil {
			return b, err
		}
		if i < n-1 {
			b = append(b, ',')
		}
		return append(b, '\n'), nil
	}, func(b []byte) error {
		_, err := bw.Write(b)
		return err
	})
	if err != nil {
		return err
	}
	bw.WriteString("  ]\n}\n")
	return bw.Flush()
}
