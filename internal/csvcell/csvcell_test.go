package csvcell

import (
	"bytes"
	"encoding/csv"
	"testing"
)

// TestNeutralise follows the OWASP "CSV Injection" guidance (common practice): text
// starting with a formula trigger gets a leading quote; numbers stay numbers.
func TestNeutralise(t *testing.T) {
	for in, want := range map[string]string{
		"":                 "",
		"plain":            "plain",
		"1=1":              "1=1",
		"-1.5":             "-1.5",
		"+3e-4":            "+3e-4",
		"-1e999":           "-1e999",
		"=cmd()":           "'=cmd()",
		"+SUM(A1:A2)":      "'+SUM(A1:A2)",
		"-2+3":             "'-2+3",
		"@SUM(A1)":         "'@SUM(A1)",
		"-Inf":             "'-Inf",
		"-0x1p3":           "'-0x1p3",
		"\t=1+1":           "'\t=1+1",
		"\r=1+1":           "'\r=1+1",
		"'=cmd()":          "'=cmd()",
		"=HYPERLINK(\"\")": "'=HYPERLINK(\"\")",
	} {
		got := Neutralise(in)
		if got != want {
			t.Errorf("Neutralise(%q) = %q, want %q", in, got, want)
		}
		if Neutralise(got) != got {
			t.Errorf("Neutralise not idempotent on %q", got)
		}
	}
}

// TestAppendMatchesEncodingCSV: Write's cell quoting gives the bytes of the standard
// library's csv.Writer (the reference implementation of RFC 4180 quoting here).
func TestAppendMatchesEncodingCSV(t *testing.T) {
	cells := []string{"", "a", " a", "a ", "\ta", "a,b", `a"b`, `"`, `""`, "a\nb", "a\r\nb", "\r", `\.`, `\.x`,
		"\u00a0nbsp", "\u2003em", "naïve", "'=x", "#x"}
	for _, c := range cells {
		var ref bytes.Buffer
		cw := csv.NewWriter(&ref)
		if err := cw.Write([]string{"x", c}); err != nil {
			t.Fatal(err)
		}
		cw.Flush()
		got := string(Append(append(Append(nil, "x"), ','), c)) + "\n"
		if got != ref.String() {
			t.Errorf("cell %q: got %q, encoding/csv %q", c, got, ref.String())
		}
	}
}
