package main

import "io"

// termWriter is the way to the terminal (standard output or error): it drops control
// characters other than newline and tab, so that no text from an input file (a currency, a
// supplier, a label) can move the cursor or clear the screen, and it keeps the first write error,
// so that output lost to a full disk or a closed pipe fails the command instead of passing
// silently.
type termWriter struct {
	w   io.Writer
	err error
	buf []byte
}

func (t *termWriter) Write(p []byte) (int, error) {
	if t.err != nil {
		return 0, t.err
	}
	out := p
	if i := firstControl(p); i >= 0 {
		t.buf = append(t.buf[:0], p[:i]...)
		for j := i; j < len(p); j++ {
			switch c := p[j]; {
			case c == '\n' || c == '\t':
				t.buf = append(t.buf, c)
			case c < 0x20 || c == 0x7f:
			case c == 0xc2 && j+1 < len(p) && p[j+1] >= 0x80 && p[j+1] <= 0x9f: // a C1 control, U+0080–U+009F
				j++
			default:
				t.buf = append(t.buf, c)
			}
		}
		out = t.buf
	}
	if _, err := t.w.Write(out); err != nil {
		t.err = err
		return 0, err
	}
	return len(p), nil
}

// firstControl is the index of the first byte termWriter would drop, or -1.
func firstControl(p []byte) int {
	for i, c := range p {
		if (c < 0x20 && c != '\n' && c != '\t') || c == 0x7f {
			return i
		}
		if c == 0xc2 && i+1 < len(p) && p[i+1] >= 0x80 && p[i+1] <= 0x9f {
			return i
		}
	}
	return -1
}
