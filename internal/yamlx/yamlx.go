// Package yamlx decodes hoplore's YAML files strictly and reports every
// problem as FILE:LINE:COL: message. Scalar value types (durations, bit
// rates, packet rates, sizes) parse their own syntax and remember where they
// were written, so that checks made after decoding can still point at the
// offending text.
package yamlx

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"reflect"
	"strconv"
	"strings"
	"time"

	"github.com/goccy/go-yaml"
	"github.com/goccy/go-yaml/ast"

	"hoplore/internal/inputerr"
)

// Pos is a position in a YAML file (1-based line and column; zero when unknown).
type Pos struct {
	Line, Col int
}

// PosOf returns where node starts: for a block mapping, its first key
// (the library's own token for a mapping is its first colon).
func PosOf(n ast.Node) Pos {
	if m, ok := n.(*ast.MappingNode); ok && len(m.Values) > 0 && m.Values[0].Key != nil {
		if p := PosOf(m.Values[0].Key); p.Line > 0 {
			if t := m.GetToken(); t != nil && t.Position != nil && t.Value == "{" {
				return Pos{Line: t.Position.Line, Col: t.Position.Column}
			}
			return p
		}
	}
	if mv, ok := n.(*ast.MappingValueNode); ok && mv.Key != nil {
		return PosOf(mv.Key)
	}
	if n == nil || n.GetToken() == nil || n.GetToken().Position == nil {
		return Pos{}
	}
	p := n.GetToken().Position
	return Pos{Line: p.Line, Col: p.Column}
}

// Error is a problem in an input file at a position.
type Error struct {
	File string
	Pos  Pos
	Msg  string
}

func (e *Error) Error() string {
	line, col := e.Pos.Line, e.Pos.Col
	if line == 0 {
		line, col = 1, 1
	}
	return fmt.Sprintf("%s:%d:%d: %s", e.File, line, col, e.Msg)
}

// Is marks the error as bad input (inputerr.ErrBadInput).
func (e *Error) Is(target error) bool { return target == inputerr.ErrBadInput }

// Errorf returns an *Error at pos in file.
func Errorf(file string, pos Pos, format string, args ...any) error {
	return &Error{File: file, Pos: pos, Msg: fmt.Sprintf(format, args...)}
}

// posError is returned by value decoders; Decode fills in the file.
type posError struct {
	pos Pos
	msg string
}

func (e *posError) Error() string { return e.msg }

// At returns an error at pos for use inside UnmarshalYAML methods; Decode
// turns it into an *Error naming the file.
func At(pos Pos, format string, args ...any) error {
	return &posError{pos: pos, msg: fmt.Sprintf(format, args...)}
}

// Decode parses data (the contents of file) into v, rejecting unknown
// fields, and returns any problem as an *Error. A leading UTF-8 byte order
// mark is ignored; nesting and aliases are bounded first (CheckShape).
func Decode(file string, data []byte, v any) (err error) {
	defer func() {
		// the YAML library can panic on hostile input: report, don't crash
		if r := recover(); r != nil {
			err = &Error{File: file, Msg: fmt.Sprintf("cannot read this YAML (%v)", r)}
		}
	}()
	data = bytes.TrimPrefix(data, bom)
	if err := CheckShape(file, data); err != nil {
		return err
	}
	err = yaml.UnmarshalWithOptions(data, v, yaml.Strict())
	if err != nil && isUnknownField(err) {
		if first := firstUnknown(file, data, v); first != nil {
			return first
		}
	}
	return NameField(data, Convert(file, err))
}

// DecodeNode decodes one node into v strictly; for UnmarshalYAML methods.
func DecodeNode(n ast.Node, v any) error {
	err := yaml.NodeToValue(n, v, yaml.Strict())
	if err != nil && isUnknownField(err) {
		if key, name := unknownIn(n, reflect.TypeOf(v)); key != nil {
			return UnknownField(PosOf(key), name)
		}
	}
	return err
}

// Convert turns an error from the YAML library or from a value decoder into
// an *Error naming file, keeping *Error values as they are.
func Convert(file string, err error) error {
	if err == nil {
		return nil
	}
	var fe *Error
	if errors.As(err, &fe) {
		return fe
	}
	var pe *posError
	if errors.As(err, &pe) {
		return &Error{File: file, Pos: pe.pos, Msg: pe.msg}
	}
	var ye yaml.Error
	if errors.As(err, &ye) {
		pos := Pos{}
		if t := ye.GetToken(); t != nil && t.Position != nil {
			pos = Pos{Line: t.Position.Line, Col: t.Position.Column}
		}
		return &Error{File: file, Pos: pos, Msg: cleanMsg(ye.GetMessage())}
	}
	return &Error{File: file, Msg: cleanMsg(err.Error())}
}

func cleanMsg(s string) string {
	s = strings.TrimSpace(s)
	if i := strings.Index(s, "\n"); i >= 0 {
		s = s[:i]
	}
	// "[3:5] msg" prefixes from the library are replaced by our own position.
	if strings.HasPrefix(s, "[") {
		if i := strings.Index(s, "] "); i > 0 {
			s = s[i+2:]
		}
	}
	return s
}

func scalar(n ast.Node) (string, error) {
	switch n.Type() {
	case ast.StringType, ast.IntegerType, ast.FloatType, ast.LiteralType, ast.NanType, ast.InfinityType:
		s := n.GetToken().Value
		return strings.TrimSpace(s), nil
	case ast.NullType:
		return "", At(PosOf(n), "value is empty")
	}
	return "", At(PosOf(n), "expected a single value, got %s", strings.ToLower(n.Type().String()))
}

// Duration is a Go-syntax duration such as 600s or 50ms.
type Duration struct {
	D   time.Duration
	Pos Pos
	Set bool
}

// UnmarshalYAML implements the YAML library's node unmarshaler.
func (d *Duration) UnmarshalYAML(n ast.Node) error {
	d.Pos = PosOf(n)
	s, err := scalar(n)
	if err != nil {
		return err
	}
	if s == "0" {
		d.D, d.Set = 0, true
		return nil
	}
	v, err := time.ParseDuration(s)
	if err != nil {
		return At(d.Pos, "%q is not a duration (use Go syntax such as 600s, 50ms, 1m30s)", s)
	}
	d.D, d.Set = v, true
	return nil
}

// Bandwidth is a bit rate in SI units: 1Mbps, 10Gbps, 64kbps, 1e6 (bit/s).
type Bandwidth struct {
	BPS float64
	Pos Pos
	Set bool
}

var bitUnits = []struct {
	suffix string
	mult   float64
}{{"tbps", 1e12}, {"gbps", 1e9}, {"mbps", 1e6}, {"kbps", 1e3}, {"bps", 1}, {"tbit/s", 1e12}, {"gbit/s", 1e9}, {"mbit/s", 1e6}, {"kbit/s", 1e3}, {"bit/s", 1}}

// ParseBandwidth parses a bit rate such as "10Mbps" into bit/s.
func ParseBandwidth(s string) (float64, error) {
	t := strings.ToLower(strings.TrimSpace(s))
	mult := 1.0
	for _, u := range bitUnits {
		if strings.HasSuffix(t, u.suffix) {
			t, mult = strings.TrimSpace(strings.TrimSuffix(t, u.suffix)), u.mult
			break
		}
	}
	v, err := strconv.ParseFloat(t, 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, fmt.Errorf("%q is not a bit rate (use SI units such as 1Mbps, 10Gbps, 512kbps)", s)
	}
	return v * mult, nil
}

// UnmarshalYAML implements the YAML library's node unmarshaler.
func (b *Bandwidth) UnmarshalYAML(n ast.Node) error {
	b.Pos = PosOf(n)
	s, err := scalar(n)
	if err != nil {
		return err
	}
	v, err := ParseBandwidth(s)
	if err != nil {
		return At(b.Pos, "%v", err)
	}
	b.BPS, b.Set = v, true
	return nil
}

// Rate is a packet rate such as 80/s (packets per second); 5/ms and 300/min
// are accepted too, as is a bare number (per second).
type Rate struct {
	PerSecond float64
	Pos       Pos
	Set       bool
}

// UnmarshalYAML implements the YAML library's node unmarshaler.
func (r *Rate) UnmarshalYAML(n ast.Node) error {
	r.Pos = PosOf(n)
	s, err := scalar(n)
	if err != nil {
		return err
	}
	num, unit, has := strings.Cut(s, "/")
	per := 1.0
	if has {
		switch strings.TrimSpace(unit) {
		case "s":
			per = 1
		case "ms":
			per = 1e-3
		case "us":
			per = 1e-6
		case "min":
			per = 60
		case "h":
			per = 3600
		default:
			return At(r.Pos, "%q is not a rate (use N/s, N/ms or N/min)", s)
		}
	}
	v, err := strconv.ParseFloat(strings.TrimSpace(num), 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return At(r.Pos, "%q is not a rate (use N/s, N/ms or N/min)", s)
	}
	r.PerSecond, r.Set = v/per, true
	return nil
}

// Float is a number that remembers its position.
type Float struct {
	V   float64
	Pos Pos
	Set bool
}

// UnmarshalYAML implements the YAML library's node unmarshaler.
func (f *Float) UnmarshalYAML(n ast.Node) error {
	f.Pos = PosOf(n)
	s, err := scalar(n)
	if err != nil {
		return err
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return At(f.Pos, "%q is not a number", s)
	}
	f.V, f.Set = v, true
	return nil
}

// Int is an integer that remembers its position.
type Int struct {
	V   int
	Pos Pos
	Set bool
}

// UnmarshalYAML implements the YAML library's node unmarshaler.
func (i *Int) UnmarshalYAML(n ast.Node) error {
	i.Pos = PosOf(n)
	s, err := scalar(n)
	if err != nil {
		return err
	}
	v, err := strconv.ParseInt(s, 10, 64)
	if err != nil {
		return At(i.Pos, "%q is not a whole number", s)
	}
	i.V, i.Set = int(v), true
	return nil
}

// String is a string that remembers its position.
type String struct {
	S   string
	Pos Pos
	Set bool
}

// UnmarshalYAML implements the YAML library's node unmarshaler.
func (s *String) UnmarshalYAML(n ast.Node) error {
	s.Pos = PosOf(n)
	v, err := scalar(n)
	if err != nil {
		return err
	}
	s.S, s.Set = v, true
	return nil
}
