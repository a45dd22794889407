package linelist

import "bandwright/internal/textcheck"

// Limits of the CSV files bandwright reads (line lists and peak lists),
// checked before the rows are parsed, so that memory stays proportional to
// the size of a file whatever its shape. Each breach is an error naming the
// file (and the line).
const (
	// MaxFileBytes bounds the size of a CSV file: 512 MiB hold about ten
	// million lines, which the reader keeps in about 9 bytes of memory per
	// byte of file (see the README's promises).
	MaxFileBytes = 512 << 20
	// MaxColumns bounds the columns of a header: the standard columns and a
	// generous number of pass-through ones.
	MaxColumns = 1000
	// MaxLineBytes bounds a physical line (a 2 MB comment is fine), so that a file without line breaks
	// or a row of millions of fields is refused before it is split into cells.
	MaxLineBytes = 16 << 20
)

// tooLarge is the problem of a file above MaxFileBytes.
var tooLarge = &textcheck.TooLargeError{Limit: MaxFileBytes, What: "a CSV file"}
