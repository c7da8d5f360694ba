package intake

import (
	"errors"
	"fmt"
	"io"
	"strings"

	"blackmass/cathode"
	"blackmass/data"
	"blackmass/feed/recover"
	"blackmass/feed/value"
)

// maxPricePerKg bounds a price: above any battery metal's price per kg in any currency in use
// (common practice, with a wide margin).
const maxPricePerKg = 1e6

// ReadPrices reads a prices file: columns item, basis, price_per_kg, currency, payable, source.
// An element row (item a metal symbol; basis metal, or LCE for lithium) prices the black mass,
// with its payable share (0..1 or a percentage); a product row (item a product of the
// recovery by formula or name, Li2CO3, CoSO4·7H2O, Co cathode ...; basis product or empty)
// prices that product per kg as sold, payable left empty. Every row carries the same currency;
// an element or a product is priced once.
func ReadPrices(r io.Reader, name string) (*value.PriceList, error) {
	t, err := data.ParseTable(r, name)
	if err != nil {
		return nil, &Error{File: name, Reason: strings.TrimPrefix(err.Error(), name+": ")}
	}
	for _, h := range t.Header {
		if !priceColumns[h] {
			return nil, &Error{File: name, Line: 1, Column: "column", Value: h,
				Reason: "not a column of a prices file (want item, basis, price_per_kg, currency, payable, source; notes is read past)"}
		}
	}
	for _, c := range []string{"item", "price_per_kg", "currency", "payable"} {
		if !t.Has(c) {
			return nil, &Error{File: name, Line: 1, Reason: fmt.Sprintf("missing column %q (want item, basis, price_per_kg, currency, payable, source)", c)}
		}
	}
	pl := &value.PriceList{File: name}
	// Only the symbols are checked here (is it an element, is it a metal), and those are
	// IUPAC's, not a table a user edits; the weights that turn wt% into moles come later, from
	// the tables the calculation is given.
	es := cathode.DefaultElements()
	seen := map[string]int{}
	for _, row := range t.Rows {
		fail := func(col, val, reason string) error {
			return &Error{File: name, Line: row.Line, Column: col, Value: val, Reason: reason}
		}
		el := row.Str("item")
		basis := row.Str("basis")
		if strings.EqualFold(basis, value.BasisProduct) || es.Lookup(el) == nil || !cathode.IsMetal(el) {
			pp, err := productPrice(row, fail, el, basis)
			if err != nil {
				return nil, err
			}
			if first, dup := seen["product "+pp.Item]; dup {
				return nil, fail("item", el, fmt.Sprintf("product %s priced twice (first on line %d)", pp.Item, first))
			}
			seen["product "+pp.Item] = row.Line
			if err := oneCurrency(pl, row, fail); err != nil {
				return nil, err
			}
			pl.Products = append(pl.Products, pp)
			continue
		}
		if first, dup := seen[el]; dup {
			return nil, fail("item", el, fmt.Sprintf("priced twice (first on line %d)", first))
		}
		seen[el] = row.Line
		switch {
		case basis == "" || strings.EqualFold(basis, value.BasisMetal):
			basis = value.BasisMetal
		case strings.EqualFold(basis, value.BasisLCE) && el == "Li":
			basis = value.BasisLCE
		default:
			return nil, fail("basis", basis, "want metal (per kg of the element), or LCE for lithium (per kg of lithium carbonate equivalent)")
		}
		price, err := ParseNumber(row.Str("price_per_kg"), false)
		if err != nil || price < 0 || price > maxPricePerKg {
			return nil, fail("price_per_kg", row.Str("price_per_kg"), fmt.Sprintf("want a price from 0 to %g per kg", float64(maxPricePerKg)))
		}
		if err := oneCurrency(pl, row, fail); err != nil {
			return nil, err
		}
		pay, err := share(row.Str("payable"))
		if err != nil {
			return nil, fail("payable", row.Str("payable"), err.Error())
		}
		pl.Prices = append(pl.Prices, value.Price{Element: el, Basis: basis, PerKg: price, Payable: pay, Source: row.Str("source")})
	}
	return pl, nil
}

// productPrice reads a row that prices a product of the recovery: the item by formula or name
// (Li2CO3, CoSO4·7H2O, nickel hydroxide, Co cathode; a metal symbol with basis product is its
// electrowon metal), per kg of the product as sold, so the payable share is left empty (or 1).
func productPrice(row data.Row, fail func(col, val, reason string) error, item, basis string) (value.ProductPrice, error) {
	if basis != "" && !strings.EqualFold(basis, value.BasisProduct) {
		return value.ProductPrice{}, fail("basis", basis, "a product is priced per kg of the product: basis product (or empty)")
	}
	key, ok := recover.LookupProduct(item)
	if !ok && strings.EqualFold(basis, value.BasisProduct) {
		key, ok = recover.LookupProduct(item + " metal")
	}
	if !ok {
		return value.ProductPrice{}, fail("item", item, "neither a metal symbol (Co, Ni, Li, Mn, Cu, Al ...; case matters) "+
			"nor a product of the recovery (want one of "+strings.Join(recover.ProductKeys(), ", ")+")")
	}
	price, err := ParseNumber(row.Str("price_per_kg"), false)
	if err != nil || price < 0 || price > maxPricePerKg {
		return value.ProductPrice{}, fail("price_per_kg", row.Str("price_per_kg"),
			fmt.Sprintf("want a price from 0 to %g per kg", float64(maxPricePerKg)))
	}
	if p := trimSpace(row.Str("payable")); p != "" {
		if v, err := share(p); err != nil || v != 1 {
			return value.ProductPrice{}, fail("payable", p, "a product is priced as sold: leave payable empty (or 1)")
		}
	}
	return value.ProductPrice{Item: key, PerKg: price, Source: row.Str("source"), Line: row.Line}, nil
}

// oneCurrency reads a row's currency, the same for every row of the file.
func oneCurrency(pl *value.PriceList, row data.Row, fail func(col, val, reason string) error) error {
	cur := strings.ToUpper(row.Str("currency"))
	if cur == "" || len(cur) > 8 {
		return fail("currency", row.Str("currency"), "want a currency code such as EUR or USD")
	}
	if pl.Currency == "" {
		pl.Currency = cur
	} else if cur != pl.Currency {
		return fail("currency", cur, fmt.Sprintf("every row must use one currency (the first row uses %s)", pl.Currency))
	}
	return nil
}

// priceColumns are the columns of a prices file; any other is refused by name, so a misspelt
// column (prce_per_kg, payables) is not dropped unseen.
var priceColumns = map[string]bool{"item": true, "basis": true, "price_per_kg": true, "currency": true, "payable": true, "source": true,
	"notes": true, "note": true, "comment": true, "comments": true}

// share reads a fraction 0..1, or a percentage with its sign.
func share(s string) (float64, error) {
	pct := strings.HasSuffix(trimSpace(s), "%")
	v, err := ParseNumber(strings.TrimSuffix(trimSpace(s), "%"), false)
	if err != nil {
		return 0, errors.New("want a share from 0 to 1, or a percentage such as 75%")
	}
	if pct {
		v /= 100
	}
	if v < 0 || v > 1 {
		return 0, errors.New("a payable share lies from 0 to 1 (0 % to 100 %)")
	}
	return v, nil
}
