package mdtext

import (
	"html"
	"strings"
)

// Inline is a piece of inline text read back from Markdown: literal text,
// bold (**…**) or a code span (`…`).
type Inline struct {
	Text       string
	Bold, Code bool
}

// Unescape reads the inline Markdown that bandwright writes — text escaped
// by Escape, **bold** and `code` spans — back into pieces of literal text:
// backslash escapes give the character, the entities &amp; &lt; &gt; &quot;
// and numeric ones the character they name. Anything else is literal.
func Unescape(s string) []Inline {
	var out []Inline
	var cur strings.Builder
	bold := false
	flush := func() {
		if cur.Len() > 0 {
			out = append(out, Inline{Text: cur.String(), Bold: bold})
			cur.Reset()
		}
	}
	for i := 0; i < len(s); {
		c := s[i]
		switch {
		case c == '\\' && i+1 < len(s) && isASCIIPunct(s[i+1]):
			cur.WriteByte(s[i+1])
			i += 2
		case c == '&':
			n := entityLen(s[i:])
			if n == 0 {
				cur.WriteByte(c)
				i++
				continue
			}
			cur.WriteString(html.UnescapeString(s[i : i+n]))
			i += n
		case c == '`':
			j := strings.IndexByte(s[i+1:], '`')
			if j < 0 {
				cur.WriteByte(c)
				i++
				continue
			}
			flush()
			out = append(out, Inline{Text: s[i+1 : i+1+j], Code: true, Bold: bold})
			i += j + 2
		case c == '*' && strings.HasPrefix(s[i:], "**"):
			flush()
			bold = !bold
			i += 2
		default:
			cur.WriteByte(c)
			i++
		}
	}
	flush()
	return out
}

// isASCIIPunct reports whether c is an ASCII punctuation character, the
// characters a backslash escapes in CommonMark.
func isASCIIPunct(c byte) bool {
	return c >= '!' && c <= '/' || c >= ':' && c <= '@' || c >= '[' && c <= '`' || c >= '{' && c <= '~'
}

// entityLen returns the length of the entity reference at the start of s
// (&name; or &#123; or &#x1F;), or 0.
func entityLen(s string) int {
	for i := 1; i < len(s) && i < 32; i++ {
		c := s[i]
		switch {
		case c == ';':
			if i == 1 {
				return 0
			}
			return i + 1
		case c == '#' && i == 1, c >= 'a' && c <= 'z', c >= 'A' && c <= 'Z', c >= '0' && c <= '9':
		default:
			return 0
		}
	}
	return 0
}

// SplitRow splits a table row of Markdown ("| a | b\|c |") into its cells,
// trimmed, without the outer pipes; an escaped pipe stays in its cell (still
// escaped, for Unescape).
func SplitRow(line string) []string {
	line = strings.TrimSpace(line)
	line = strings.TrimPrefix(line, "|")
	var cells []string
	var cur strings.Builder
	for i := 0; i < len(line); i++ {
		switch {
		case line[i] == '\\' && i+1 < len(line):
			cur.WriteByte(line[i])
			cur.WriteByte(line[i+1])
			i++
		case line[i] == '|':
			cells = append(cells, strings.TrimSpace(cur.String()))
			cur.Reset()
		default:
			cur.WriteByte(line[i])
		}
	}
	if rest := strings.TrimSpace(cur.String()); rest != "" {
		cells = append(cells, rest)
	}
	return cells
}
