package diag

import (
	"fmt"
	"sort"
	"strings"
)

// Pos is a position in a source file. Line and Column count from 1;
// Column counts Unicode code points; Offset is the byte offset from 0.
type Pos struct {
	Line, Column, Offset int
}

// IsValid reports whether p refers to a real position.
func (p Pos) IsValid() bool { return p.Line > 0 }

// Before reports whether p comes before q in the same file.
func (p Pos) Before(q Pos) bool { return p.Offset < q.Offset }

// Range is a span of source text in one file; End is exclusive.
type Range struct {
	File       string
	Start, End Pos
}

// String formats the range start as file:line:column.
func (r Range) String() string {
	if !r.Start.IsValid() {
		if r.File == "" {
			return "<unknown>"
		}
		return r.File
	}
	f := r.File
	if f == "" {
		f = "<input>"
	}
	return fmt.Sprintf("%s:%d:%d", f, r.Start.Line, r.Start.Column)
}

// Join returns the smallest range covering r and s (which must be in
// the same file). An invalid range is ignored.
func (r Range) Join(s Range) Range {
	if !r.Start.IsValid() {
		return s
	}
	if !s.Start.IsValid() {
		return r
	}
	out := r
	if s.Start.Offset < out.Start.Offset {
		out.Start = s.Start
	}
	if s.End.Offset > out.End.Offset {
		out.End = s.End
	}
	return out
}

// Severity says how serious a diagnostic is.
type Severity int

// Severities, most serious first.
const (
	Error Severity = iota
	Warning
	Note
)

// String returns "error", "warning" or "note".
func (s Severity) String() string {
	switch s {
	case Error:
		return "error"
	case Warning:
		return "warning"
	default:
		return "note"
	}
}

// MarshalText makes a Severity encode as its name in JSON.
func (s Severity) MarshalText() ([]byte, error) { return []byte(s.String()), nil }

// Diagnostic is one message about the source: what is wrong, where, and
// where it helps, what to write instead.
type Diagnostic struct {
	Severity Severity `json:"severity"`
	// Code is a short stable identifier of the kind of problem, such as
	// "syntax", "unknown-name", "dimension".
	Code string `json:"code"`
	// Message is one sentence in the user's terms.
	Message string `json:"message"`
	// Subject is the text the message is about.
	Subject Range `json:"range"`
	// Suggestion, when not empty, is what to write instead
	// (a correctly spelled name, a unit).
	Suggestion string `json:"suggestion,omitempty"`
	// Notes are further lines of explanation (e.g. where a name was first
	// defined).
	Notes []string `json:"notes,omitempty"`
}

// Error formats the diagnostic on one line as file:line:col: message.
func (d *Diagnostic) Error() string {
	s := fmt.Sprintf("%s: %s: %s", d.Subject, d.Severity, d.Message)
	if d.Suggestion != "" {
		s += " (did you mean " + d.Suggestion + "?)"
	}
	return s
}

// List is a set of diagnostics. The zero value is ready to use.
type List []*Diagnostic

// Add appends an error diagnostic.
func (l *List) Add(code string, r Range, format string, args ...any) *Diagnostic {
	d := &Diagnostic{Severity: Error, Code: code, Subject: r, Message: fmt.Sprintf(format, args...)}
	*l = append(*l, d)
	return d
}

// Warn appends a warning diagnostic.
func (l *List) Warn(code string, r Range, format string, args ...any) *Diagnostic {
	d := l.Add(code, r, format, args...)
	d.Severity = Warning
	return d
}

// Append adds all diagnostics of m to l.
func (l *List) Append(m List) { *l = append(*l, m...) }

// HasErrors reports whether any diagnostic is an error.
func (l List) HasErrors() bool {
	for _, d := range l {
		if d.Severity == Error {
			return true
		}
	}
	return false
}

// Errors returns only the error diagnostics.
func (l List) Errors() List {
	var out List
	for _, d := range l {
		if d.Severity == Error {
			out = append(out, d)
		}
	}
	return out
}

// Sort orders the list by file, then position, then severity, and drops
// exact duplicates (same range and message).
func (l *List) Sort() {
	s := *l
	sort.SliceStable(s, func(i, j int) bool {
		a, b := s[i], s[j]
		if a.Subject.File != b.Subject.File {
			return a.Subject.File < b.Subject.File
		}
		if a.Subject.Start.Offset != b.Subject.Start.Offset {
			return a.Subject.Start.Offset < b.Subject.Start.Offset
		}
		return a.Severity < b.Severity
	})
	out := s[:0]
	for i, d := range s {
		if i > 0 {
			p := out[len(out)-1]
			if p.Subject == d.Subject && p.Message == d.Message {
				continue
			}
		}
		out = append(out, d)
	}
	*l = out
}

// Err returns the list as an error if it holds any error diagnostic,
// or nil.
func (l List) Err() error {
	if !l.HasErrors() {
		return nil
	}
	return ListError(l)
}

// ListError is a List used as an error value.
type ListError List

// Error joins the one-line forms of all diagnostics.
func (e ListError) Error() string {
	var b strings.Builder
	for i, d := range e {
		if i > 0 {
			b.WriteByte('\n')
		}
		b.WriteString(d.Error())
	}
	return b.String()
}
