package datasets

import (
	"errors"
	"fmt"
	"strings"
	"unicode/utf8"
)

// Sentinel errors carried by a *ParseError; test for them with errors.Is.
var (
	ErrEmpty          = errors.New("the input is empty")
	ErrNoRows         = errors.New("no data rows after the header")
	ErrRagged         = errors.New("wrong number of fields")
	ErrQuote          = errors.New(`unterminated or misplaced '"' in a quoted field`)
	ErrBareQuote      = errors.New(`bare '"' in an unquoted field`)
	ErrEmptyName      = errors.New("empty column name")
	ErrDuplicateName  = errors.New("duplicate column name")
	ErrUnknownColumn  = errors.New("no such column")
	ErrNoLabel        = errors.New("label column not found")
	ErrMissingLabel   = errors.New("missing label")
	ErrOneClass       = errors.New("the label needs at least 2 classes")
	ErrNotFinite      = errors.New("number is not finite")
	ErrStrayWord      = errors.New("word in a numeric column")
	ErrNotNumber      = errors.New("not a number in a column read as numeric")
	ErrDecimalComma   = errors.New("number with a decimal comma")
	ErrTooManyClasses = errors.New("too many classes for a label")
	ErrNoColumns      = errors.New("no feature columns left")
	ErrNUL            = errors.New("NUL byte")
	ErrUTF8           = errors.New("invalid UTF-8")
	ErrLineTooLong    = errors.New("record longer than 1 MiB")
	ErrGzip           = errors.New("gzip stream is corrupt or truncated")
	ErrOptions        = errors.New("conflicting read options")
	ErrRead           = errors.New("read failed")
)

// ParseError reports bad input, in the style of encoding/csv.ParseError with
// the file and column name added. Every error Read and ReadFile return is a
// *ParseError; Err wraps one of the sentinel errors above (and, for I/O and
// gzip failures, the underlying error too).
type ParseError struct {
	// File is the path or name the input was read from ("-" for stdin).
	File string
	// Line is the 1-based line of the error; 0 when it concerns no one line
	// (a label with one class, an empty file).
	Line int
	// Column is the 1-based field number in the record; 0 when the error
	// concerns no one field.
	Column int
	// ColumnName is the header name of that field, when known.
	ColumnName string
	// Field is the offending cell's text (or a prefix of it), when there is one.
	Field string
	Err   error
}

// maxFieldShown bounds how much of a bad cell goes into the message;
// maxBinaryShown bounds it for a cell of control bytes or invalid UTF-8 (a
// binary file read as CSV), which prints escaped at up to four characters
// a byte.
const (
	maxFieldShown  = 60
	maxBinaryShown = 12
)

// excerpt returns the start of a cell for a message, cut at a character
// boundary, with "..." when cut.
func excerpt(f string) string {
	limit := maxFieldShown
	if !printable(f) {
		limit = maxBinaryShown
	}
	if len(f) <= limit {
		return f
	}
	for limit > 0 && !utf8.RuneStart(f[limit]) {
		limit--
	}
	return f[:limit] + "..."
}

func printable(s string) bool {
	if !utf8.ValidString(s) {
		return false
	}
	for _, r := range s {
		if r < 0x20 && r != '\t' || r == 0x7f {
			return false
		}
	}
	return true
}

func (e *ParseError) Error() string {
	var b strings.Builder
	b.WriteString("datasets: ")
	b.WriteString(e.File)
	if e.Line > 0 {
		fmt.Fprintf(&b, ":%d", e.Line)
	}
	b.WriteString(": ")
	if e.Column > 0 || e.ColumnName != "" {
		b.WriteString("column")
		if e.Column > 0 {
			fmt.Fprintf(&b, " %d", e.Column)
		}
		if e.ColumnName != "" {
			fmt.Fprintf(&b, " %q", e.ColumnName)
		}
		b.WriteString(": ")
	}
	if e.Field != "" {
		fmt.Fprintf(&b, "%q: ", excerpt(e.Field))
	}
	if e.Err != nil {
		b.WriteString(e.Err.Error())
	}
	return b.String()
}

func (e *ParseError) Unwrap() error { return e.Err }
