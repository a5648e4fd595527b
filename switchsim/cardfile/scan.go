package cardfile

import (
	"path"
	"railyard/switchsim/internal/netbuild"
	"strings"

	"railyard/switchsim/diag"
)

// tok is one word of a card. Expressions written in {} or ” are one tok
// with expr set and the text inside; "=" is a tok of its own (eq).
type tok struct {
	text string
	pos  diag.Pos
	expr bool // {expression} or 'expression'
	str  bool // "double-quoted"
	eq   bool // the = of KEY=VALUE
}

// card is one logical line: a first line and its + continuations. Its
// words keep the positions of the physical lines they are on.
type card struct {
	toks []tok
	pos  diag.Pos
	// pininfo is set for a *.pininfo comment card (pin directions).
	pininfo bool
}

// head is the card's first word in lower case ("" for none).
func (c *card) head() string {
	if len(c.toks) == 0 {
		return ""
	}
	return strings.ToLower(c.toks[0].text)
}

// scanner turns the text of one deck and the files it includes into cards.
type scanner struct {
	lim   Limits
	open  Opener
	errs  *netbuild.Sink
	notes *netbuild.Sink
	cards []card
	stack []string        // files being read, for include cycles
	seen  map[string]bool // files read once already
	total int             // bytes read over every file
	files int             // includes read
	title string
	// skipping state: inside .control ... .endc or a .lib section
	skipUntil string
	skipPos   diag.Pos
}

func isSpace(c byte) bool { return c == ' ' || c == '\t' || c == '\r' || c == '\f' || c == '\v' }

// file scans one file's text; top is set for the deck itself, whose first
// line may be a title (the card format's convention).
func (s *scanner) file(name string, src []byte, top bool) {
	if e := diag.CheckSize(name, src, s.lim.FileSize); e != nil {
		s.errs.AddErr(e)
		return
	}
	if e := diag.CheckText(name, src); e != nil {
		s.errs.AddErr(e)
		return
	}
	s.total += len(src)
	if s.total > s.lim.TotalSize {
		s.errs.Add(diag.Pos{File: name}, "the deck and its includes pass the limit of %s together", diag.SizeString(s.lim.TotalSize))
		return
	}
	s.stack = append(s.stack, name)
	defer func() { s.stack = s.stack[:len(s.stack)-1] }()
	if len(src) >= 3 && src[0] == 0xEF && src[1] == 0xBB && src[2] == 0xBF {
		src = src[3:]
	}
	var cur *card
	finish := func() {
		if cur == nil {
			return
		}
		c := *cur
		cur = nil
		s.finish(name, c)
	}
	num := 0
	for len(src) > 0 {
		num++
		end := 0
		for end < len(src) && src[end] != '\n' {
			end++
		}
		text := src[:end]
		if end < len(src) {
			src = src[end+1:]
		} else {
			src = nil
		}
		if len(text) > s.lim.LineLen {
			s.errs.Add(diag.Pos{File: name, Line: num, Col: s.lim.LineLen + 1}, "line is longer than the limit of %d bytes", s.lim.LineLen)
			continue
		}
		i := 0
		for i < len(text) && isSpace(text[i]) {
			i++
		}
		if i == len(text) {
			continue // a blank line ends nothing: continuations may follow
		}
		switch text[i] {
		case '*':
			if rest := strings.ToLower(string(text[i+1:])); strings.HasPrefix(rest, ".pininfo") {
				finish()
				c := card{pos: diag.Pos{File: name, Line: num, Col: i + 1}, pininfo: true}
				c.toks = s.words(name, num, text, i+9)
				s.cards = append(s.cards, c)
			}
			continue
		case '+':
			if cur == nil {
				s.errs.Add(diag.Pos{File: name, Line: num, Col: i + 1}, "continuation line (+) with no card before it")
				continue
			}
			cur.toks = append(cur.toks, s.words(name, num, text, i+1)...)
			if len(cur.toks) > s.lim.CardWords {
				s.errs.Add(diag.Pos{File: name, Line: num, Col: i + 1}, "card is longer than the limit of %d words", s.lim.CardWords)
				cur = nil
			}
			continue
		}
		if top && num == 1 && isTitle(text[i:]) {
			s.title = strings.TrimSpace(string(text))
			s.notes.Add(diag.Pos{File: name, Line: 1}, "line 1 read as the deck's title, as the card format's first line is: %q", s.title)
			continue
		}
		finish()
		if s.ended(name) {
			s.notes.Add(diag.Pos{File: name, Line: num, Col: i + 1}, "the rest of the file, after .end, is not read")
			return
		}
		cur = &card{pos: diag.Pos{File: name, Line: num, Col: i + 1}}
		cur.toks = s.words(name, num, text, i)
	}
	finish()
}

// ended reports whether the last card finished was .end: the rest of the
// file is not read.
func (s *scanner) ended(file string) bool {
	n := len(s.cards)
	return n > 0 && s.cards[n-1].pos.File == file && s.cards[n-1].head() == ".end"
}

// isTitle tells a title on line 1 from a card: a line that starts with a
// letter and is not a well-formed M, X, C or R card is a title.
func isTitle(line []byte) bool {
	c := line[0] | 0x20
	if c < 'a' || c > 'z' {
		return false
	}
	n := len(strings.Fields(string(line)))
	switch c {
	case 'm':
		return n < 6
	case 'x':
		return n < 3
	case 'c', 'r':
		return n < 4
	}
	return true
}

// finish takes one complete card: control blocks are skipped here and
// includes are read in place, so cards keep the order of the text.
func (s *scanner) finish(file string, c card) {
	h := c.head()
	if s.skipUntil != "" {
		if h == s.skipUntil {
			s.skipUntil = ""
		}
		return
	}
	switch h {
	case ".control":
		s.notes.Add(c.pos, "skipped: a .control block (commands for a circuit simulator) up to .endc")
		s.skipUntil, s.skipPos = ".endc", c.pos
		return
	case ".lib":
		if len(c.toks) == 2 && !c.toks[1].str && !strings.ContainsAny(c.toks[1].text, "./") {
			s.notes.Add(c.pos, "skipped: library section %q up to .endl (sections are not read; give the models with .model cards or --nmos-models/--pmos-models)", c.toks[1].text)
			s.skipUntil, s.skipPos = ".endl", c.pos
			return
		}
	case ".include", ".inc":
		s.include(file, c)
		return
	}
	s.cards = append(s.cards, c)
}

// include reads an included file through the opener, in place.
func (s *scanner) include(from string, c card) {
	if len(c.toks) != 2 {
		s.errs.Add(c.pos, ".include takes one file name, found %d words", len(c.toks)-1)
		return
	}
	name := c.toks[1].text
	at := c.toks[1].pos
	if len(s.stack) > s.lim.IncludeDepth {
		s.errs.Add(at, "includes nest more than %d deep", s.lim.IncludeDepth)
		return
	}
	if s.files >= s.lim.Includes {
		s.errs.Add(at, "more than %d includes", s.lim.Includes)
		return
	}
	s.files++
	if s.open == nil {
		s.errs.Add(at, "cannot include %q: this deck was given as text with no folder to include from", name)
		return
	}
	resolved, src, err := s.open(from, name)
	if err != nil {
		s.errs.Add(at, "cannot include %q: %v", name, err)
		return
	}
	for i, f := range s.stack {
		if f == resolved {
			chain := append(append([]string(nil), s.stack[i:]...), resolved)
			for j := range chain {
				chain[j] = path.Base(chain[j])
			}
			s.errs.Add(at, "include cycle: %s", strings.Join(chain, " -> "))
			return
		}
	}
	if s.seen[resolved] {
		s.notes.Add(at, "%q is included a second time: not read again", name)
		return
	}
	s.seen[resolved] = true
	s.file(resolved, src, false)
}

// words splits text[from:] into toks.
func (s *scanner) words(file string, line int, text []byte, from int) []tok {
	out := make([]tok, 0, 12) // most cards have fewer words: one allocation each
	at := func(i int) diag.Pos { return diag.Pos{File: file, Line: line, Col: i + 1} }
	for i := from; i < len(text); {
		c := text[i]
		switch {
		case isSpace(c) || c == '(' || c == ')' || c == ',':
			i++
		case c == ';', c == '$' && (i+1 == len(text) || isSpace(text[i+1])):
			return out // a trailing comment
		case c == '=':
			out = append(out, tok{text: "=", pos: at(i), eq: true})
			i++
		case c == '{' || c == '\'' || c == '"':
			close := byte('}')
			if c != '{' {
				close = c
			}
			j := i + 1
			depth := 1
			for j < len(text) {
				if c == '{' && text[j] == '{' {
					depth++
				} else if text[j] == close {
					depth--
					if depth == 0 {
						break
					}
				}
				j++
			}
			if j >= len(text) {
				s.errs.Add(at(i), "%c is not closed on this line", c)
				return out
			}
			out = append(out, tok{text: string(text[i+1 : j]), pos: at(i), expr: c != '"', str: c == '"'})
			i = j + 1
		default:
			j := i
			for j < len(text) && !isSpace(text[j]) && !strings.ContainsRune("=(),{}'\";", rune(text[j])) {
				j++
			}
			if j == i { // a lone } or the like
				s.errs.Add(at(i), "unexpected %q", text[i])
				j++
			} else {
				out = append(out, tok{text: string(text[i:j]), pos: at(i)})
			}
			i = j
		}
	}
	return out
}
