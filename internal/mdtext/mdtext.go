// Package mdtext is the one rule by which bandwright puts text into Markdown
// (fit.md, assign.md, report.md, the nightly summaries), and the reader of
// that rule for the report, which shows those files as HTML.
//
// # The rule
//
// Escape makes any text read as itself wherever Markdown takes inline text: a
// paragraph, a list item, a table cell, a heading, the text of a link. It
//
//   - writes the characters that start HTML, entities or Markdown inline
//     constructs as entities (& < > as &amp; &lt; &gt;) or with a backslash
//     (\ ` * _ [ ] | ~ $), so that a file name can open no tag, no
//     emphasis, no code span, no link or image, no table column and no
//     formula of the notebooks that render $…$ as mathematics;
//   - escapes a marker at the start of the text that would open a block (a
//     heading "#", a list item "- ", "+ ", "1. ", "1) ", a thematic break
//     "---"), since the text may start a line or a list item;
//   - turns line breaks and tabs into spaces, so the text stays in its
//     block.
//
// A backslash before an ASCII punctuation character is a literal character
// in CommonMark (0.31, section 2.4) and in GitHub's tables, so the rule is
// safe in every one of those places and needs no variant per place. Text
// from users never goes into a code span (where backslashes are literal).
package mdtext

import "strings"

var replacer = strings.NewReplacer(
	`\`, `\\`, "`", "\\`", "*", `\*`, "_", `\_`, "[", `\[`, "]", `\]`,
	"|", `\|`, "~", `\~`, "$", `\$`, "&", "&amp;", "<", "&lt;", ">", "&gt;",
	"\r\n", " ", "\n", " ", "\r", " ", "\t", " ",
)

// Escape returns s written by the rule of the package: it reads as s in any
// inline place of a Markdown document.
func Escape(s string) string {
	return blockSafe(replacer.Replace(s))
}

// blockSafe escapes a marker at the start of s that would open a heading, a
// list item or a thematic break (CommonMark 0.31, sections 4.1, 4.2, 5.2).
func blockSafe(s string) string {
	if s == "" {
		return s
	}
	spaceOrEnd := func(i int) bool { return i >= len(s) || s[i] == ' ' }
	switch s[0] {
	case '#':
		return `\` + s
	case '+':
		if spaceOrEnd(1) {
			return `\` + s
		}
	case '-':
		if spaceOrEnd(1) || s[1] == '-' {
			return `\` + s
		}
	case '=':
		// A line of "=" under a paragraph makes it a heading (setext).
		return `\` + s
	}
	i := 0
	for i < len(s) && s[i] >= '0' && s[i] <= '9' {
		i++
	}
	if i > 0 && i < len(s) && (s[i] == '.' || s[i] == ')') && spaceOrEnd(i+1) {
		return s[:i] + `\` + s[i:]
	}
	return s
}
