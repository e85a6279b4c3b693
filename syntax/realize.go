package syntax

// realize reads "realize BLOCK as STRUCTURE in FORMAT". A format such as
// q3.12 lexes as the name q3 and the number .12; written together they are
// one format.
func (p *parser) realize() Stmt {
	start := p.tok().From
	p.next()
	r := &RealizeStmt{}
	t := p.tok()
	if t.kind != tName {
		p.errorf(t.Span, "expected a block name after realize, found %s", t.describe())
		return p.badStmt(start)
	}
	p.next()
	r.Block = &Ident{t.Span, t.text}
	var ok bool
	if r.AsKw, ok = p.keyword("as", "after realize "+r.Block.Name+" (realize BLOCK as STRUCTURE in FORMAT)"); !ok {
		return p.badStmt(start)
	}
	if r.Structure = p.word("a structure (direct, sections or delta) after as"); r.Structure == nil {
		return p.badStmt(start)
	}
	if r.InKw, ok = p.keyword("in", "after the structure "+r.Structure.Name+" (realize BLOCK as STRUCTURE in FORMAT)"); !ok {
		return p.badStmt(start)
	}
	if r.Format = p.format(); r.Format == nil {
		return p.badStmt(start)
	}
	if !p.endOfStmt("the format " + r.Format.Name) {
		return p.badStmt(start)
	}
	r.Span = p.spanFrom(start)
	return r
}

// keyword consumes the context word kw or reports what was found instead.
func (p *parser) keyword(kw, where string) (Span, bool) {
	t := p.tok()
	if t.kind != tName || t.text != kw {
		p.errorf(t.Span, "expected %s %s, found %s", kw, where, t.describe())
		return Span{}, false
	}
	p.next()
	return t.Span, true
}

// word reads one name.
func (p *parser) word(what string) *Ident {
	t := p.tok()
	if t.kind != tName {
		p.errorf(t.Span, "expected %s, found %s", what, t.describe())
		return nil
	}
	p.next()
	return &Ident{t.Span, t.text}
}

// format reads a name, joined with a number that follows it without a
// blank and starts with '.' (q3 .12 → q3.12).
func (p *parser) format() *Ident {
	id := p.word("a format (float64, float32 or qM.N, e.g. q1.14) after in")
	if id == nil {
		return nil
	}
	if t := p.tok(); t.kind == tNumber && t.From == id.To && len(t.text) > 1 && t.text[0] == '.' {
		p.next()
		id.Name += t.text
		id.To = t.To
	}
	return id
}
