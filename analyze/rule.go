package analyze

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// A user's episode rule is written as text (the --rule flag of the
// commands that build episodes) and parsed by ParseRule:
//
//	RULE      = NAME ":" CONDITION { ";" SETTING }
//	SETTING   = ("min_days" | "max_gap") "=" INTEGER
//	CONDITION = TERM { "or" TERM }
//	TERM      = FACTOR { "and" FACTOR }
//	FACTOR    = "not" FACTOR | "(" CONDITION ")" | FLAG | NUMBER_COLUMN OP NUMBER
//	OP        = "<" | "<=" | ">" | ">=" | "=" | "!="
//
// for example
//
//	lid_600: afternoon_mixing_height_m <= 600 and sbi_persists; min_days=3
//
// NAME is lower-case letters, digits and underscores, starting with a
// letter, at most 64 characters, and not the name of a built-in rule.
// FLAG and NUMBER_COLUMN are the per-day columns of the days table listed
// by RuleColumns (flags are true/false columns, the others numbers in the
// column's unit); keywords and names are case-insensitive; NUMBER is a
// decimal such as 600, -1.5 or 4e3. min_days (default 2, 1–366) is the
// least number of days meeting the condition in an episode, max_gap
// (default 1, 0–30) the longest run of unknown days kept inside one
// (Criterion.MinDays, Criterion.MaxGapDays).
//
// A day's answer has three values (Tri): a comparison whose column is null
// on that day (its sounding is missing, or the quantity could not be
// computed) is unknown, and unknown answers combine as in SQL: "x and y" is
// false when either is false, "x or y" true when either is true, "not" of
// unknown is unknown. An unknown day neither ends nor counts towards an
// episode (the gap rule). One exception keeps a morning without a
// surface-based inversion from being unknown: there morning_sbi_strength_k
// is 0 K in a rule (the days table leaves it null).
//
// Rules are at most MaxRuleBytes long and nest parentheses and "not" at
// most 32 deep; an error names the 1-based character position.

// MaxRuleBytes is the longest rule text ParseRule accepts.
const MaxRuleBytes = 2000

const maxRuleDepth = 32

// RuleColumn is one per-day column a rule can name.
type RuleColumn struct {
	Name string
	Flag bool   // true/false column (used alone); otherwise a number compared with OP
	Doc  string // meaning and unit
	flag func(DayRecord) Tri
	num  func(DayRecord) float64
}

var ruleColumns = []RuleColumn{
	{Name: "soundings", Doc: "analysable soundings that local day", num: func(d DayRecord) float64 { return float64(d.Soundings) }},
	{Name: "has_morning", Flag: true, Doc: "a morning sounding exists", flag: func(d DayRecord) Tri { return TriOf(d.Morning >= 0) }},
	{Name: "has_afternoon", Flag: true, Doc: "an afternoon/evening sounding exists", flag: func(d DayRecord) Tri { return TriOf(d.Afternoon >= 0) }},
	{Name: "morning_sbi", Flag: true, Doc: "surface-based inversion on the morning sounding", flag: func(d DayRecord) Tri { return d.MorningSBI }},
	{Name: "morning_sbi_strength_k", Doc: "K; morning SBI strength, 0 on a morning without an SBI", num: func(d DayRecord) float64 {
		if d.MorningSBI == No {
			return 0
		}
		return d.MorningSBIStrengthK
	}},
	{Name: "afternoon_sbi", Flag: true, Doc: "surface-based inversion on the afternoon/evening sounding", flag: func(d DayRecord) Tri { return d.AfternoonSBI }},
	{Name: "sbi_persists", Flag: true, Doc: "the morning SBI is still on the afternoon/evening sounding", flag: func(d DayRecord) Tri { return d.SBIPersists(0) }},
	{Name: "morning_heat_deficit_mj_m2", Doc: "MJ/m2; heat deficit of the morning sounding", num: func(d DayRecord) float64 { return d.MorningHeatDeficitJ / 1e6 }},
	{Name: "afternoon_heat_deficit_mj_m2", Doc: "MJ/m2; heat deficit of the afternoon/evening sounding", num: func(d DayRecord) float64 { return d.AfternoonHeatDeficitJ / 1e6 }},
	{Name: "max_heat_deficit_mj_m2", Doc: "MJ/m2; largest heat deficit of the day's soundings", num: func(d DayRecord) float64 { return d.MaxHeatDeficitJ / 1e6 }},
	{Name: "stable_layer_fraction", Doc: "0-1; stable fraction of the lowest 1.5 km, morning sounding", num: func(d DayRecord) float64 { return d.StableFraction }},
	{Name: "deep_stable_layer", Flag: true, Doc: "deep stable layer on the morning sounding (Wolyn and McKee 1989)", flag: func(d DayRecord) Tri { return d.DeepStable }},
	{Name: "afternoon_mixing_height_m", Doc: "m above ground; afternoon mixing height", num: func(d DayRecord) float64 { return d.AfternoonMHM }},
	{Name: "afternoon_transport_wind_ms", Doc: "m/s; transport wind of the afternoon/evening sounding", num: func(d DayRecord) float64 { return d.AfternoonWindMS }},
	{Name: "afternoon_ventilation_m2s", Doc: "m2/s; afternoon ventilation index", num: func(d DayRecord) float64 { return d.VentilationM2S }},
}

// RuleColumns returns the per-day columns a rule can name (each is a
// column of the days table of the same name).
func RuleColumns() []RuleColumn { return append([]RuleColumn(nil), ruleColumns...) }

// Value returns the column's value on a day in a rule: a Tri for a flag
// column, a number (NaN when null) otherwise.
func (c RuleColumn) Value(d DayRecord) (Tri, float64) {
	if c.Flag {
		return c.flag(d), math.NaN()
	}
	return Unknown, c.num(d)
}

// Or is the three-valued disjunction: Yes when either is Yes, else Unknown
// when either is Unknown, else No.
func (a Tri) Or(b Tri) Tri {
	switch {
	case a == Yes || b == Yes:
		return Yes
	case a == Unknown || b == Unknown:
		return Unknown
	}
	return No
}

// Not is the three-valued negation (Unknown stays Unknown).
func (a Tri) Not() Tri {
	switch a {
	case Yes:
		return No
	case No:
		return Yes
	}
	return Unknown
}

// Condition is a parsed rule condition (ParseRule), evaluated per day.
type Condition struct {
	op          string // "and", "or", "not", "flag" or a comparison operator
	left, right *Condition
	col         *RuleColumn
	value       float64
}

// Eval judges one day.
func (c *Condition) Eval(d DayRecord) Tri {
	switch c.op {
	case "and":
		l := c.left.Eval(d)
		if l == No {
			return No
		}
		return l.And(c.right.Eval(d))
	case "or":
		l := c.left.Eval(d)
		if l == Yes {
			return Yes
		}
		return l.Or(c.right.Eval(d))
	case "not":
		return c.left.Eval(d).Not()
	case "flag":
		t, _ := c.col.Value(d)
		return t
	}
	_, v := c.col.Value(d)
	if math.IsNaN(v) {
		return Unknown
	}
	switch c.op {
	case "<":
		return TriOf(v < c.value)
	case "<=":
		return TriOf(v <= c.value)
	case ">":
		return TriOf(v > c.value)
	case ">=":
		return TriOf(v >= c.value)
	case "=":
		return TriOf(v == c.value)
	}
	return TriOf(v != c.value) // "!="
}

// String writes the condition in canonical form: lower case, single
// spaces, parentheses around every "or" inside an "and" or "not", numbers
// in their shortest exact form. Parsing it gives the same condition.
func (c *Condition) String() string {
	var b strings.Builder
	c.write(&b, "")
	return b.String()
}

func (c *Condition) write(b *strings.Builder, parent string) {
	switch c.op {
	case "and", "or":
		paren := c.op == "or" && (parent == "and" || parent == "not")
		if paren {
			b.WriteByte('(')
		}
		c.left.write(b, c.op)
		b.WriteString(" " + c.op + " ")
		c.right.write(b, c.op)
		if paren {
			b.WriteByte(')')
		}
	case "not":
		b.WriteString("not ")
		if c.left.op == "and" {
			b.WriteByte('(')
			c.left.write(b, "")
			b.WriteByte(')')
		} else {
			c.left.write(b, "not")
		}
	case "flag":
		b.WriteString(c.col.Name)
	default:
		b.WriteString(c.col.Name + " " + c.op + " " + strconv.FormatFloat(c.value, 'g', -1, 64))
	}
}

// RuleError is a rule that cannot be parsed, with the 1-based character
// position of the problem (0: the rule as a whole).
type RuleError struct {
	Rule string
	Pos  int
	Msg  string
}

func (e *RuleError) Error() string {
	if e.Pos <= 0 {
		return fmt.Sprintf("episode rule: %s", e.Msg)
	}
	return fmt.Sprintf("episode rule: position %d: %s", e.Pos, e.Msg)
}

// ParseRule reads a user's episode rule (syntax above) into a Criterion
// with Source "user rule" and the rule's Condition, MinDays and
// MaxGapDays.
func ParseRule(text string) (Criterion, error) {
	nan := math.NaN()
	c := Criterion{Source: "user rule", MinMorningSBIStrengthK: nan, MinHeatDeficitMJ: nan, MaxAfternoonMHM: nan,
		MaxAfternoonWindMS: nan, MaxVentilationM2S: nan, MinDays: 2, MaxGapDays: 1}
	if len(text) > MaxRuleBytes {
		return c, &RuleError{Rule: text, Msg: fmt.Sprintf("%d bytes long, at most %d", len(text), MaxRuleBytes)}
	}
	toks, err := lexRule(text)
	if err != nil {
		return c, err
	}
	p := &ruleParser{text: text, toks: toks}
	name := p.next()
	if name.kind != tokIdent {
		return c, p.fail(name, "want the rule's name first (e.g. calm_lid: ...)")
	}
	if err := checkRuleName(name.text); err != nil {
		return c, p.fail(name, err.Error())
	}
	if t := p.next(); t.kind != tokColon {
		return c, p.fail(t, `want ":" after the rule's name`)
	}
	cond, err := p.condition(0)
	if err != nil {
		return c, err
	}
	seen := map[string]bool{}
	for {
		t := p.next()
		if t.kind == tokEOF {
			break
		}
		if t.kind != tokSemicolon {
			return c, p.fail(t, `want "and", "or" or ";" followed by a setting`)
		}
		key := p.next()
		if key.kind != tokIdent || (key.text != "min_days" && key.text != "max_gap") {
			return c, p.fail(key, "want a setting: min_days=N or max_gap=N")
		}
		if seen[key.text] {
			return c, p.fail(key, key.text+" given twice")
		}
		seen[key.text] = true
		if t := p.next(); t.kind != tokOp || t.text != "=" {
			return c, p.fail(t, `want "=" after `+key.text)
		}
		v := p.next()
		n, err := strconv.Atoi(v.text)
		lo, hi := 1, 366
		if key.text == "max_gap" {
			lo, hi = 0, 30
		}
		if v.kind != tokNumber || err != nil || n < lo || n > hi {
			return c, p.fail(v, fmt.Sprintf("%s wants a whole number of days from %d to %d", key.text, lo, hi))
		}
		if key.text == "min_days" {
			c.MinDays = n
		} else {
			c.MaxGapDays = n
		}
	}
	c.Name, c.Condition = name.text, cond
	return c, nil
}

func checkRuleName(s string) error {
	if len(s) > 64 || s[0] < 'a' || s[0] > 'z' {
		return fmt.Errorf("rule name %q: want a lower-case letter first and at most 64 characters", s)
	}
	for _, b := range BuiltinCriteria() {
		if b.Name == s {
			return fmt.Errorf("rule name %q is a built-in rule's; choose another", s)
		}
	}
	switch s {
	case "and", "or", "not", "min_days", "max_gap":
		return fmt.Errorf("rule name %q is a keyword", s)
	}
	return nil
}

type tokKind int

const (
	tokEOF tokKind = iota
	tokIdent
	tokNumber
	tokOp
	tokLParen
	tokRParen
	tokColon
	tokSemicolon
)

type ruleToken struct {
	kind tokKind
	text string
	pos  int // 1-based character position
}

// lexRule splits a rule into tokens; positions count characters (runes).
func lexRule(text string) ([]ruleToken, error) {
	var toks []ruleToken
	rs := []rune(text)
	isLetter := func(r rune) bool { return r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r == '_' }
	isDigit := func(r rune) bool { return r >= '0' && r <= '9' }
	for i := 0; i < len(rs); {
		r, pos := rs[i], i+1
		switch {
		case r == ' ' || r == '\t' || r == '\n' || r == '\r':
			i++
		case isLetter(r):
			j := i
			for j < len(rs) && (isLetter(rs[j]) || isDigit(rs[j])) {
				j++
			}
			toks = append(toks, ruleToken{tokIdent, strings.ToLower(string(rs[i:j])), pos})
			i = j
		case isDigit(r) || r == '.' || (r == '-' || r == '+') && i+1 < len(rs) && (isDigit(rs[i+1]) || rs[i+1] == '.'):
			j := i + 1
			for j < len(rs) && (isDigit(rs[j]) || rs[j] == '.' ||
				(rs[j] == 'e' || rs[j] == 'E') ||
				(rs[j] == '-' || rs[j] == '+') && (rs[j-1] == 'e' || rs[j-1] == 'E')) {
				j++
			}
			toks = append(toks, ruleToken{tokNumber, string(rs[i:j]), pos})
			i = j
		case r == '<' || r == '>' || r == '!' || r == '=':
			op := string(r)
			if i+1 < len(rs) && rs[i+1] == '=' && r != '=' {
				op += "="
			}
			if op == "!" {
				return nil, &RuleError{Rule: text, Pos: pos, Msg: `"!" must be followed by "=" (use "not" to negate)`}
			}
			toks = append(toks, ruleToken{tokOp, op, pos})
			i += len(op)
		case r == '(':
			toks = append(toks, ruleToken{tokLParen, "(", pos})
			i++
		case r == ')':
			toks = append(toks, ruleToken{tokRParen, ")", pos})
			i++
		case r == ':':
			toks = append(toks, ruleToken{tokColon, ":", pos})
			i++
		case r == ';':
			toks = append(toks, ruleToken{tokSemicolon, ";", pos})
			i++
		default:
			return nil, &RuleError{Rule: text, Pos: pos, Msg: fmt.Sprintf("unexpected character %q", r)}
		}
	}
	return append(toks, ruleToken{kind: tokEOF, pos: len(rs) + 1}), nil
}

type ruleParser struct {
	text string
	toks []ruleToken
	i    int
}

func (p *ruleParser) peek() ruleToken { return p.toks[p.i] }

func (p *ruleParser) next() ruleToken {
	t := p.toks[p.i]
	if t.kind != tokEOF {
		p.i++
	}
	return t
}

func (p *ruleParser) fail(t ruleToken, msg string) error {
	near := t.text
	if t.kind == tokEOF {
		near = "end of rule"
	}
	return &RuleError{Rule: p.text, Pos: t.pos, Msg: fmt.Sprintf("%s (at %q)", msg, near)}
}

func (p *ruleParser) keyword(t ruleToken, k string) bool { return t.kind == tokIdent && t.text == k }

func (p *ruleParser) condition(depth int) (*Condition, error) {
	l, err := p.term(depth)
	if err != nil {
		return nil, err
	}
	for p.keyword(p.peek(), "or") {
		p.next()
		r, err := p.term(depth)
		if err != nil {
			return nil, err
		}
		l = &Condition{op: "or", left: l, right: r}
	}
	return l, nil
}

func (p *ruleParser) term(depth int) (*Condition, error) {
	l, err := p.factor(depth)
	if err != nil {
		return nil, err
	}
	for p.keyword(p.peek(), "and") {
		p.next()
		r, err := p.factor(depth)
		if err != nil {
			return nil, err
		}
		l = &Condition{op: "and", left: l, right: r}
	}
	return l, nil
}

func (p *ruleParser) factor(depth int) (*Condition, error) {
	t := p.next()
	if depth >= maxRuleDepth {
		return nil, p.fail(t, fmt.Sprintf("nested more than %d deep", maxRuleDepth))
	}
	switch {
	case p.keyword(t, "not"):
		c, err := p.factor(depth + 1)
		if err != nil {
			return nil, err
		}
		return &Condition{op: "not", left: c}, nil
	case t.kind == tokLParen:
		c, err := p.condition(depth + 1)
		if err != nil {
			return nil, err
		}
		if r := p.next(); r.kind != tokRParen {
			return nil, p.fail(r, `want ")" closing the "(" at position `+strconv.Itoa(t.pos))
		}
		return c, nil
	case t.kind == tokIdent:
		var col *RuleColumn
		for i := range ruleColumns {
			if ruleColumns[i].Name == t.text {
				col = &ruleColumns[i]
			}
		}
		if col == nil {
			return nil, p.fail(t, "unknown column; rules use the days table's columns: "+ruleColumnNames())
		}
		if col.Flag {
			if o := p.peek(); o.kind == tokOp {
				return nil, p.fail(o, t.text+" is true or false: use it alone or with not, without a comparison")
			}
			return &Condition{op: "flag", col: col}, nil
		}
		o := p.next()
		if o.kind != tokOp {
			return nil, p.fail(o, t.text+" is a number: compare it, e.g. "+t.text+" <= 600")
		}
		v := p.next()
		x, err := strconv.ParseFloat(v.text, 64)
		if v.kind != tokNumber || err != nil || math.IsInf(x, 0) || math.IsNaN(x) {
			return nil, p.fail(v, "want a finite number")
		}
		return &Condition{op: o.text, col: col, value: x}, nil
	}
	return nil, p.fail(t, `want a column, "not" or "("`)
}

func ruleColumnNames() string {
	names := make([]string, len(ruleColumns))
	for i, c := range ruleColumns {
		names[i] = c.Name
	}
	return strings.Join(names, ", ")
}
