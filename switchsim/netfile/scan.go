package netfile

import (
	"strconv"
	"strings"

	"railyard/switchsim/diag"
)

// Word is one token of a line: a bare Word, or a double-quoted string
// (Quoted, Text unquoted).
type Word struct {
	Text      string
	Line, Col int
	Quoted    bool
}

// srcLine is one line split into words, with its trailing comment.
type srcLine struct {
	num        int
	words      []Word
	comment    string // the text after '#', trimmed
	hasComment bool
}

func isSpace(c byte) bool { return c == ' ' || c == '\t' || c == '\r' || c == '\f' || c == '\v' }

// scanLines splits src (already checked to be text) into lines of words.
// A line longer than maxLine is reported and left empty. The text is
// copied once; words are slices of that copy, and the lines' words share
// one backing array, so a file costs a fixed number of bytes a word.
func scanLines(file string, src []byte, maxLine int, errs *diag.Sink) []srcLine {
	if len(src) >= 3 && src[0] == 0xEF && src[1] == 0xBB && src[2] == 0xBF {
		src = src[3:] // a byte-order mark says nothing in UTF-8
	}
	all := string(src)
	lines := make([]srcLine, 0, strings.Count(all, "\n")+1)
	words := make([]Word, 0, countWords(all))
	num := 0
	for len(all) > 0 {
		num++
		text := all
		if end := strings.IndexByte(all, '\n'); end >= 0 {
			text, all = all[:end], all[end+1:]
		} else {
			all = ""
		}
		l := srcLine{num: num}
		if len(text) > maxLine {
			errs.Add(at(file, num, maxLine+1), "line is longer than the limit of %d bytes", maxLine)
			lines = append(lines, l)
			continue
		}
		first := len(words)
		for i := 0; i < len(text); {
			c := text[i]
			switch {
			case isSpace(c):
				i++
			case c == '#':
				j, k := i+1, len(text)
				for j < k && isSpace(text[j]) {
					j++
				}
				for k > j && isSpace(text[k-1]) {
					k--
				}
				l.comment, l.hasComment = text[j:k], true
				i = len(text)
			case c == '"':
				q, err := strconv.QuotedPrefix(text[i:])
				if err != nil {
					errs.Add(at(file, num, i+1), "string is not closed or has a bad escape (use \\\" and \\\\ inside quotes)")
					i = len(text)
					break
				}
				s, err := strconv.Unquote(q)
				if err != nil {
					errs.Add(at(file, num, i+1), "bad string %s", q)
				}
				words = append(words, Word{Text: s, Line: num, Col: i + 1, Quoted: true})
				i += len(q)
			default:
				j := i
				for j < len(text) && !isSpace(text[j]) && text[j] != '#' && text[j] != '"' {
					j++
				}
				words = append(words, Word{Text: text[i:j], Line: num, Col: i + 1})
				i = j
			}
		}
		l.words = words[first:len(words):len(words)]
		lines = append(lines, l)
	}
	return lines
}

// countWords counts the words of a text the way scanLines splits them,
// closely enough to size its array once (a quoted string holding spaces
// counts more than once: the estimate errs high).
func countWords(s string) int {
	n, in, comment := 0, false, false
	for i := 0; i < len(s); i++ {
		c := s[i]
		switch {
		case c == '\n':
			in, comment = false, false
		case comment:
		case c == '#':
			comment = true
		case isSpace(c):
			in = false
		case !in:
			in = true
			n++
		}
	}
	return n
}

// at is the position of a line and column of file.
func at(file string, line, col int) diag.Pos { return diag.Pos{File: file, Line: line, Col: col} }
