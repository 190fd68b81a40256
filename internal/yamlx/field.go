package yamlx

import (
	"bytes"
	"errors"
	"regexp"
	"strings"
)

// keyBefore matches the last "key:" of a line prefix that a value follows
// (possibly inside an opened flow sequence).
var keyBefore = regexp.MustCompile(`([A-Za-z_][A-Za-z0-9_-]*)\s*:\s*(\[[^\[\]{}]*)?$`)

// hasField matches a message that already starts with a field path.
var hasField = regexp.MustCompile(`^[A-Za-z_][A-Za-z0-9_.\-\[\]]*: `)

// NameField returns err with the name of the field whose value is at the
// error's position put in front of its message ("warmup: "5" is not a
// duration"), when err is an *Error at a known position of data whose
// message does not already start with a field. The name is read from the
// source text: the key written before the value on its line, or for a
// block sequence entry the key of the sequence.
func NameField(data []byte, err error) error {
	var fe *Error
	if !errors.As(err, &fe) || fe.Pos.Line == 0 || hasField.MatchString(fe.Msg) {
		return err
	}
	lines := bytes.Split(bytes.TrimPrefix(data, bom), []byte("\n"))
	if fe.Pos.Line > len(lines) {
		return err
	}
	line := string(lines[fe.Pos.Line-1])
	prefix := line[:min(max(fe.Pos.Col-1, 0), len(line))]
	key := ""
	if m := keyBefore.FindStringSubmatch(prefix); m != nil {
		key = m[1]
	} else if strings.HasPrefix(strings.TrimSpace(prefix), "-") && strings.TrimSpace(strings.TrimLeft(strings.TrimSpace(prefix), "- ")) == "" {
		// a block sequence entry: the key of the sequence, on an earlier
		// line of smaller indentation
		indent := len(prefix) - len(strings.TrimLeft(prefix, " "))
		for i := fe.Pos.Line - 2; i >= 0; i-- {
			l := string(lines[i])
			t := strings.TrimLeft(l, " ")
			if t == "" || strings.HasPrefix(t, "#") || len(l)-len(t) >= indent && strings.HasPrefix(t, "-") {
				continue // blank, comment, or an earlier entry of the same sequence
			}
			if len(l)-len(t) <= indent {
				if m := keyBefore.FindStringSubmatch(strings.TrimRight(l, " ")); m != nil {
					key = m[1] + "[…]"
				}
				break
			}
		}
	}
	if key == "" || strings.Contains(fe.Msg, strings.TrimSuffix(key, "[…]")+":") {
		return err // no key found, or the message names it already
	}
	return &Error{File: fe.File, Pos: fe.Pos, Msg: key + ": " + fe.Msg}
}
