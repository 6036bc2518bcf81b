package cli

import (
	"io"
)

// printableText wraps w so that control characters in the text (a class
// named with a terminal escape sequence, a carriage return that would
// overwrite a line) reach neither a terminal nor a text file: each C0
// control but tab and line feed, DEL, and each C1 control (U+0080 to
// U+009F) is written as U+FFFD, one character for one, so tables keep
// their alignment. Data formats (CSV, JSON) are written unfiltered.
func printableText(w io.Writer) io.Writer {
	if p, ok := w.(*printable); ok {
		return p
	}
	return &printable{w: w}
}

type printable struct {
	w io.Writer
	// pending is a 0xC2 byte at the end of the last write: the first half
	// of a two-byte character that may be a C1 control.
	pending bool
	buf     []byte
}

const replacement = "\uFFFD"

func (p *printable) Write(b []byte) (int, error) {
	out := p.buf[:0]
	i := 0
	if p.pending && len(b) > 0 {
		p.pending = false
		if b[0] >= 0x80 && b[0] <= 0x9F {
			out = append(out, replacement...)
			i = 1
		} else {
			out = append(out, 0xC2)
		}
	}
	for ; i < len(b); i++ {
		c := b[i]
		switch {
		case c < 0x20 && c != '\n' && c != '\t', c == 0x7F:
			out = append(out, replacement...)
		case c == 0xC2 && i+1 == len(b):
			p.pending = true
		case c == 0xC2 && b[i+1] >= 0x80 && b[i+1] <= 0x9F:
			out = append(out, replacement...)
			i++
		default:
			out = append(out, c)
		}
	}
	p.buf = out
	if _, err := p.w.Write(out); err != nil {
		return 0, err
	}
	return len(b), nil
}
