package textcheck

// TOMLNesting returns nil when the tables, inline tables and arrays of the
// TOML text b nest at most max levels deep, and otherwise a *NestingError at
// the line where the limit is passed.
//
// Depth counts every segment of a dotted key or table name (a.b.c = 1 puts the
// value three tables down, within the table of its header), every inline table
// and every array, and an array of tables ([[a]]) as an array holding a table. The scan skips strings and comments and leaves syntax to
// the parser: it over-counts rather than under-counts where text is malformed.
func TOMLNesting(b []byte, max int) error {
	s := tomlScan{b: b, max: max, line: 1, keyMode: true}
	for s.i < len(s.b) {
		if err := s.step(); err != nil {
			return err
		}
	}
	return nil
}

// tomlScan is the state of TOMLNesting.
type tomlScan struct {
	b       []byte
	i       int
	line    int
	max     int
	base    int    // depth of the current [table] header
	stack   []byte // open '[' (array) and '{' (inline table) of values
	depths  []int  // depth inside each open bracket
	keyMode bool   // a key is expected next (line start, or after '{' or ',' in an inline table)
	valueAt int    // depth of the value being read
	seen    int    // deepest level seen
}

func (s *tomlScan) deeper(d int) error {
	s.seen = max(s.seen, d)
	if d > s.max {
		return &NestingError{Line: s.line, Max: s.max}
	}
	return nil
}

// step consumes one token.
func (s *tomlScan) step() error {
	c := s.b[s.i]
	switch {
	case c == '\n':
		s.line++
		s.i++
		if len(s.stack) == 0 {
			s.keyMode = true
		}
		return nil
	case c == ' ' || c == '\t' || c == '\r':
		s.i++
		return nil
	case c == '#':
		s.skipComment()
		return nil
	case c == '"' || c == '\'':
		s.skipString()
		return nil
	case s.keyMode && len(s.stack) == 0 && c == '[':
		return s.tableHeader()
	case s.keyMode:
		return s.key()
	}
	return s.value(c)
}

// value handles one byte of a value outside strings and comments.
func (s *tomlScan) value(c byte) error {
	s.i++
	switch c {
	case '[', '{':
		d := s.valueAt + 1
		if err := s.deeper(d); err != nil {
			return err
		}
		s.stack = append(s.stack, c)
		s.depths = append(s.depths, d)
		s.valueAt = d
		s.keyMode = c == '{'
	case ']', '}':
		if n := len(s.stack); n > 0 {
			s.stack, s.depths = s.stack[:n-1], s.depths[:n-1]
		}
		s.valueAt = s.base
		if n := len(s.depths); n > 0 {
			s.valueAt = s.depths[n-1]
		}
	case ',':
		if n := len(s.stack); n > 0 && s.stack[n-1] == '{' {
			s.keyMode = true
			s.valueAt = s.depths[n-1]
		}
	}
	return nil
}

// key reads a (dotted) key up to its '=' and sets the depth of its value.
func (s *tomlScan) key() error {
	at := s.base
	if n := len(s.depths); n > 0 {
		at = s.depths[n-1]
	}
	segs := s.segments('=')
	s.valueAt = at + segs
	s.keyMode = false
	return s.deeper(s.valueAt)
}

// tableHeader reads [a.b] or [[a.b]] and sets the depth of the table.
func (s *tomlScan) tableHeader() error {
	s.i++
	array := s.i < len(s.b) && s.b[s.i] == '['
	if array {
		s.i++
	}
	s.base = s.segments(']')
	if array {
		s.base++ // the array of tables, then the table
	}
	s.valueAt = s.base
	for s.i < len(s.b) && s.b[s.i] == ']' {
		s.i++
	}
	s.keyMode = false // the rest of the line is a comment or nothing
	return s.deeper(s.base)
}

// segments counts the dot-separated segments of a key or table name, stopping
// before end, a newline or the end of the text (quoted segments may contain
// dots).
func (s *tomlScan) segments(end byte) int {
	n := 1
	for s.i < len(s.b) {
		switch c := s.b[s.i]; c {
		case end, '\n':
			if c == end && end == '=' {
				s.i++
			}
			return n
		case '"', '\'':
			s.skipString()
			continue
		case '.':
			n++
		}
		s.i++
	}
	return n
}

func (s *tomlScan) skipComment() {
	for s.i < len(s.b) && s.b[s.i] != '\n' {
		s.i++
	}
}

// skipString skips a basic or literal string, one-line or multi-line,
// counting the lines it spans.
func (s *tomlScan) skipString() {
	q := s.b[s.i]
	multi := s.i+2 < len(s.b) && s.b[s.i+1] == q && s.b[s.i+2] == q
	if multi {
		s.i += 3
	} else {
		s.i++
	}
	for s.i < len(s.b) {
		c := s.b[s.i]
		switch {
		case c == '\\' && q == '"':
			s.i++
		case c == '\n':
			s.line++
			if !multi {
				return // unterminated: the parser says so
			}
		case c == q && !multi:
			s.i++
			return
		case c == q && s.i+2 < len(s.b) && s.b[s.i+1] == q && s.b[s.i+2] == q:
			s.i += 3
			for s.i < len(s.b) && s.b[s.i] == q { // up to two quotes may end the content
				s.i++
			}
			return
		}
		s.i++
	}
}
