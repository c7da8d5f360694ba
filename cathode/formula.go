package cathode

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
)

// coulombsPerMAh is the charge of one mAh: 1e-3 A × 3600 s.
const coulombsPerMAh = 3.6

// Parse errors wrapped by [FormulaError].
var (
	ErrEmptyFormula   = errors.New("empty formula")
	ErrUnknownElement = errors.New("unknown element")
	ErrSyntax         = errors.New("syntax error")
	ErrCount          = errors.New("bad count")
)

// FormulaError reports where and why a formula failed to parse.
type FormulaError struct {
	Formula string // the input as given
	Pos     int    // byte offset of the problem, 0-based
	Err     error  // one of the Err* sentinels, possibly wrapped with detail
	Detail  string
}

func (e *FormulaError) Error() string {
	msg := fmt.Sprintf("formula %q: at position %d: %v", e.Formula, e.Pos+1, e.Err)
	if e.Detail != "" {
		msg += ": " + e.Detail
	}
	return msg
}

func (e *FormulaError) Unwrap() error { return e.Err }

// Term is an amount of one element: moles of element per mole of formula, or a mass fraction,
// depending on where it is returned from.
type Term struct {
	Symbol string
	Amount float64
}

// Formula is a parsed chemical formula: element moles per mole of formula unit, in order of first
// appearance. The zero value is an empty formula.
type Formula struct {
	text  string
	terms []Term
	es    *Elements // the table the formula was parsed with (nil: the default)
}

// Elements returns the atomic-weight table the formula was parsed with.
func (f Formula) Elements() *Elements {
	if f.es != nil {
		return f.es
	}
	return DefaultElements()
}

// maxFormulaLen bounds the input so that parsing stays cheap whatever a user types.
const maxFormulaLen = 256

// ParseFormula parses a formula such as "LiNi0.8Mn0.1Co0.1O2", "LiNi1/3Mn1/3Co1/3O2",
// "Al2(SO4)3" or "CoSO4·7H2O" (hydrate dot '·' or '*', with an optional leading count on each
// part). Counts may be integers, decimals or fractions a/b. Element symbols are checked against
// the embedded atomic-weight table. Errors are *FormulaError and never panic.
func ParseFormula(s string) (Formula, error) { return DefaultElements().ParseFormula(s) }

// ParseFormula parses s, recognising the element symbols of es. See the package function.
func (es *Elements) ParseFormula(s string) (Formula, error) {
	p := formulaParser{src: s, es: es, acc: map[string]float64{}}
	if err := p.parse(); err != nil {
		return Formula{}, err
	}
	f := Formula{text: strings.TrimSpace(s), es: es}
	for _, sym := range p.order {
		f.terms = append(f.terms, Term{sym, p.acc[sym]})
	}
	return f, nil
}

type formulaParser struct {
	src   string
	pos   int
	es    *Elements
	acc   map[string]float64
	order []string
	depth int
}

func (p *formulaParser) fail(pos int, err error, detail string) error {
	return &FormulaError{Formula: p.src, Pos: pos, Err: err, Detail: detail}
}

func (p *formulaParser) parse() error {
	if len(p.src) > maxFormulaLen {
		return p.fail(maxFormulaLen, ErrSyntax, fmt.Sprintf("longer than %d bytes", maxFormulaLen))
	}
	p.skipSpace()
	if p.pos == len(p.src) {
		return p.fail(p.pos, ErrEmptyFormula, "")
	}
	for {
		// One part of a hydrate: an optional leading count, then a group.
		mult := 1.0
		if p.pos < len(p.src) && isDigit(p.src[p.pos]) {
			c, err := p.count()
			if err != nil {
				return err
			}
			mult = c
			p.skipSpace()
		}
		start := p.pos
		terms, err := p.group()
		if err != nil {
			return err
		}
		if len(terms) == 0 {
			return p.fail(start, ErrSyntax, "expected an element symbol or '('")
		}
		for _, t := range terms {
			p.add(t.Symbol, t.Amount*mult)
			if p.acc[t.Symbol] > 1e6 {
				return p.fail(start, ErrCount, fmt.Sprintf("more than 1e6 of %s per formula unit", t.Symbol))
			}
		}
		p.skipSpace()
		if p.pos == len(p.src) {
			break
		}
		if n := hydrateSep(p.src[p.pos:]); n > 0 {
			p.pos += n
			p.skipSpace()
			if p.pos == len(p.src) {
				return p.fail(p.pos, ErrSyntax, "nothing after the hydrate dot")
			}
			continue
		}
		return p.fail(p.pos, ErrSyntax, fmt.Sprintf("unexpected %q", p.rest()))
	}
	return nil
}

func (p *formulaParser) rest() string {
	r := []rune(p.src[p.pos:])
	return string(r[:1])
}

func hydrateSep(s string) int {
	for _, sep := range []string{"·", "•", "*", "⋅"} {
		if strings.HasPrefix(s, sep) {
			return len(sep)
		}
	}
	return 0
}

func (p *formulaParser) add(sym string, n float64) {
	if _, ok := p.acc[sym]; !ok {
		p.order = append(p.order, sym)
	}
	p.acc[sym] += n
}

func (p *formulaParser) skipSpace() {
	for p.pos < len(p.src) && (p.src[p.pos] == ' ' || p.src[p.pos] == '\t') {
		p.pos++
	}
}

// group parses items until a closing bracket, a hydrate separator or the end.
func (p *formulaParser) group() ([]Term, error) {
	var out []Term
	for p.pos < len(p.src) {
		c := p.src[p.pos]
		switch {
		case c >= 'A' && c <= 'Z':
			start := p.pos
			sym := p.symbol()
			if p.es.Lookup(sym) == nil {
				return nil, p.fail(start, ErrUnknownElement, sym)
			}
			n, err := p.optCount()
			if err != nil {
				return nil, err
			}
			out = append(out, Term{sym, n})
		case c == '(' || c == '[':
			open := p.pos
			closer := byte(')')
			if c == '[' {
				closer = ']'
			}
			p.depth++
			if p.depth > 16 {
				return nil, p.fail(open, ErrSyntax, "brackets nested too deeply")
			}
			p.pos++
			inner, err := p.group()
			if err != nil {
				return nil, err
			}
			p.depth--
			if p.pos >= len(p.src) || p.src[p.pos] != closer {
				return nil, p.fail(open, ErrSyntax, fmt.Sprintf("unclosed %q", c))
			}
			if len(inner) == 0 {
				return nil, p.fail(open, ErrSyntax, "empty brackets")
			}
			p.pos++
			n, err := p.optCount()
			if err != nil {
				return nil, err
			}
			for _, t := range inner {
				out = append(out, Term{t.Symbol, t.Amount * n})
			}
		case c == ')' || c == ']':
			if p.depth == 0 {
				return nil, p.fail(p.pos, ErrSyntax, fmt.Sprintf("unmatched %q", c))
			}
			return out, nil
		case c >= 'a' && c <= 'z':
			return nil, p.fail(p.pos, ErrSyntax, fmt.Sprintf("element symbols start with a capital letter, not %q", c))
		case isDigit(c) || c == '.':
			return nil, p.fail(p.pos, ErrCount, "a count must follow an element or a bracket")
		default:
			return out, nil
		}
	}
	return out, nil
}

// symbol reads the longest known symbol at pos: a capital and, if it makes a known symbol, one
// lower-case letter.
func (p *formulaParser) symbol() string {
	s := p.src[p.pos : p.pos+1]
	if p.pos+1 < len(p.src) && p.src[p.pos+1] >= 'a' && p.src[p.pos+1] <= 'z' {
		two := p.src[p.pos : p.pos+2]
		if p.es.Lookup(two) != nil || p.es.Lookup(s) == nil {
			p.pos += 2
			return two
		}
	}
	p.pos++
	return s
}

func isDigit(c byte) bool { return c >= '0' && c <= '9' }

func (p *formulaParser) optCount() (float64, error) {
	if p.pos < len(p.src) && (isDigit(p.src[p.pos]) || p.src[p.pos] == '.') {
		return p.count()
	}
	return 1, nil
}

// count reads a positive number: 2, 0.8, .5 or 1/3.
func (p *formulaParser) count() (float64, error) {
	start := p.pos
	num, err := p.decimal()
	if err != nil {
		return 0, err
	}
	if p.pos < len(p.src) && p.src[p.pos] == '/' {
		p.pos++
		if p.pos >= len(p.src) || !isDigit(p.src[p.pos]) {
			return 0, p.fail(p.pos, ErrCount, "a fraction needs a denominator")
		}
		den, err := p.decimal()
		if err != nil {
			return 0, err
		}
		if den == 0 {
			return 0, p.fail(start, ErrCount, "division by zero")
		}
		num /= den
	}
	if num <= 0 || num > 1e6 || math.IsInf(num, 0) || math.IsNaN(num) {
		return 0, p.fail(start, ErrCount, fmt.Sprintf("%q must be positive and at most 1e6", p.src[start:p.pos]))
	}
	return num, nil
}

func (p *formulaParser) decimal() (float64, error) {
	start := p.pos
	dot := false
	for p.pos < len(p.src) && (isDigit(p.src[p.pos]) || (p.src[p.pos] == '.' && !dot)) {
		if p.src[p.pos] == '.' {
			dot = true
		}
		p.pos++
	}
	text := p.src[start:p.pos]
	v, err := strconv.ParseFloat(text, 64)
	if err != nil || text == "." || strings.HasSuffix(text, ".") {
		return 0, p.fail(start, ErrCount, fmt.Sprintf("%q is not a number", text))
	}
	return v, nil
}

// String returns the formula as typed (trimmed).
func (f Formula) String() string { return f.text }

// Canonical returns the formula written from its element moles, e.g. "LiNi0.8Mn0.1Co0.1O2".
// Parsing the canonical form gives the same element moles.
func (f Formula) Canonical() string {
	var b strings.Builder
	for _, t := range f.terms {
		b.WriteString(t.Symbol)
		if t.Amount != 1 {
			b.WriteString(strconv.FormatFloat(t.Amount, 'f', -1, 64))
		}
	}
	return b.String()
}

// Terms returns the element moles per mole of formula, in order of first appearance.
func (f Formula) Terms() []Term { return append([]Term(nil), f.terms...) }

// Moles returns the moles of symbol per mole of formula (0 if absent).
func (f Formula) Moles(symbol string) float64 {
	for _, t := range f.terms {
		if t.Symbol == symbol {
			return t.Amount
		}
	}
	return 0
}

// MolarMass returns the molar mass in g/mol with the atomic weights of es.
func (f Formula) MolarMass(es *Elements) float64 {
	m := 0.0
	for _, t := range f.terms {
		m += t.Amount * es.Weight(t.Symbol)
	}
	return m
}

// MassFractions returns each element's mass fraction (0..1, summing to 1) in order of first
// appearance.
func (f Formula) MassFractions(es *Elements) []Term {
	m := f.MolarMass(es)
	out := make([]Term, len(f.terms))
	for i, t := range f.terms {
		out[i] = Term{t.Symbol, t.Amount * es.Weight(t.Symbol) / m}
	}
	return out
}

// TheoreticalCapacityMAhPerG returns q = n·F/(3.6·M) in mAh/g for n electrons (lithium ions)
// exchanged per formula unit, with F in C/mol and M the molar mass in g/mol.
func TheoreticalCapacityMAhPerG(electronsPerFormula, molarMassGPerMol float64) float64 {
	return electronsPerFormula * FaradayCPerMol / (coulombsPerMAh * molarMassGPerMol)
}
