package kernel

import "context"

// Bundle is a MIME bundle: MIME type to data, as carried in the "data"
// field of display_data and execute_result messages. Text types map to
// strings; application/json maps to any JSON-encodable value.
type Bundle map[string]any

// Sink receives what a running cell emits before it finishes.
type Sink interface {
	// Stream writes text to the cell's "stdout" or "stderr" stream.
	Stream(name, text string)
	// Display shows a rich result (a display_data message).
	Display(b Bundle)
}

// CellError is the error a failed cell returns. The kernel turns it into an
// error reply and an iopub error message.
type CellError struct {
	Name      string   // short class of the error, e.g. "CheckError"
	Value     string   // one-line summary
	Traceback []string // lines shown to the user (source excerpt with caret)
}

// Error implements error.
func (e *CellError) Error() string { return e.Name + ": " + e.Value }

// Completion is the answer to a complete_request.
type Completion struct {
	Matches     []string
	CursorStart int // in Unicode code points, as the protocol counts
	CursorEnd   int
}

// Engine runs cells for the kernel. The kernel owns the protocol; the
// engine owns the language and the session workspace. An implementation
// must be safe for one call at a time (the kernel serialises execution).
type Engine interface {
	// Execute runs one cell. A bare expression yields a non-nil result
	// bundle (sent as execute_result). A failing cell returns an error
	// (ideally *CellError) and must leave the workspace unchanged.
	// Cancelling ctx interrupts a running solve.
	Execute(ctx context.Context, code string, sink Sink) (result Bundle, err error)
	// Complete proposes completions at cursor (a code-point offset).
	Complete(code string, cursor int) Completion
	// Inspect returns help for the name at cursor; found=false if none.
	Inspect(code string, cursor int, detailLevel int) (b Bundle, found bool)
	// IsComplete reports "complete", "incomplete" or "invalid" and, for
	// incomplete code, the indent to suggest.
	IsComplete(code string) (status, indent string)
	// Reset clears the workspace (used on restart).
	Reset()
	// Info describes the language for kernel_info_reply.
	Info() LanguageInfo
}

// LanguageInfo is the language_info of kernel_info_reply.
type LanguageInfo struct {
	Name          string
	Version       string
	MIMEType      string
	FileExtension string
	PygmentsLexer string // empty when none fits
	Banner        string
	ImplVersion   string
	HelpLinks     []HelpLink
}

// HelpLink is one entry of kernel_info_reply's help_links.
type HelpLink struct {
	Text, URL string
}
