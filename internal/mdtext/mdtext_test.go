package mdtext

import (
	"strings"
	"testing"
)

// The rule: markup becomes entities, characters that start inline constructs
// are backslash-escaped, block markers at the start are escaped, and line
// breaks cannot start a new block (CommonMark 0.31, section 2.4 backslash
// escapes, sections 4–5 block structure; GitHub's tables for the pipe).
func TestEscape(t *testing.T) {
	cases := []struct{ in, want string }{
		{"<script>alert(1)</script>", "&lt;script&gt;alert(1)&lt;/script&gt;"},
		{"a | b", `a \| b`},
		{"*x* _y_ `z` [l](u) ~s~", `\*x\* \_y\_ \` + "`" + `z\` + "`" + ` \[l\](u) \~s\~`},
		{"$x^2$", `\$x^2\$`},
		{"# heading", `\# heading`},
		{"- item", `\- item`},
		{"+ item", `\+ item`},
		{"12. item", `12\. item`},
		{"3) item", `3\) item`},
		{"===", `\===`},
		{"line\nnext\r\n# more\tend", "line next # more end"},
		{`back\slash`, `back\\slash`},
		{"&amp;", "&amp;amp;"},
		{"2169.75(3)", "2169.75(3)"},
		{"-13.24150(10)", "-13.24150(10)"},
		{"1.5e-06", "1.5e-06"},
		{"---", `\---`},
		{"#tag", `\#tag`},
		{"plain name 1.csv", "plain name 1.csv"},
		{"", ""},
	}
	for _, c := range cases {
		if got := Escape(c.in); got != c.want {
			t.Errorf("Escape(%q) = %q, want %q", c.in, got, c.want)
		}
	}
}

// Unescape reads back what Escape wrote, whatever the text: the rule loses
// nothing but line breaks and tabs.
func TestUnescapeRoundTrip(t *testing.T) {
	for _, s := range []string{"<b>&amp;</b> | *x* _y_ `z` [l](u) ~s~ $5", `back\slash \n`, "# 1. - + ===", "ωe 1.9(3)", "&#65;&bogus"} {
		got := ""
		for _, in := range Unescape(Escape(s)) {
			if in.Bold || in.Code {
				t.Errorf("Unescape(Escape(%q)) made markup: %+v", s, in)
			}
			got += in.Text
		}
		if got != s {
			t.Errorf("Unescape(Escape(%q)) = %q", s, got)
		}
	}
}

func TestUnescapeMarkup(t *testing.T) {
	got := Unescape("**12 lines** of `a.csv` \\*")
	want := []Inline{{Text: "12 lines", Bold: true}, {Text: " of "}, {Text: "a.csv", Code: true}, {Text: " *"}}
	if len(got) != len(want) {
		t.Fatalf("got %+v", got)
	}
	for i := range want {
		if got[i] != want[i] {
			t.Errorf("piece %d = %+v, want %+v", i, got[i], want[i])
		}
	}
}

func TestSplitRow(t *testing.T) {
	got := SplitRow(`| a | b\|c | 1.5 |`)
	want := []string{"a", `b\|c`, "1.5"}
	if len(got) != len(want) {
		t.Fatalf("SplitRow = %q", got)
	}
	for i := range want {
		if got[i] != want[i] {
			t.Errorf("cell %d = %q, want %q", i, got[i], want[i])
		}
	}
}

// FuzzEscape: whatever the text, its escaped form holds no line break and
// no raw < or >, and reads back as the text (line breaks and tabs as spaces).
func FuzzEscape(f *testing.F) {
	f.Add("<a href='x'>*y*</a>\n# z | `w` &amp;")
	f.Fuzz(func(t *testing.T, s string) {
		e := Escape(s)
		if strings.ContainsAny(e, "\n\r<>") {
			t.Fatalf("Escape(%q) = %q keeps a line break or a raw < >", s, e)
		}
		got := ""
		for _, in := range Unescape(e) {
			got += in.Text
		}
		want := strings.NewReplacer("\r\n", " ", "\n", " ", "\r", " ", "\t", " ").Replace(s)
		if got != want {
			t.Fatalf("Unescape(Escape(%q)) = %q", s, got)
		}
	})
}
