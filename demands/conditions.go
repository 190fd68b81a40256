package demands

import (
	"fmt"
	"math"
	"strconv"
	"strings"
	"time"

	"hoplore/internal/yamlx"
)

// Link conditions over time. A conditions file (CSV or Parquet) has the
// columns t, a, b and at least one of bandwidth, delay and loss (matched
// case-insensitively):
//
//	t,a,b,bandwidth,delay,loss
//	0,Arvenport,Bellcaster,10Mbps,,
//	120,Arvenport,Bellcaster,5Mbps,,0.01
//	5m,Bellcaster,Corlund,,12ms,
//
// Each row sets the parameters it gives of the link a–b (both directions)
// from time t on (seconds, or a Go duration in CSV); an empty cell (or a
// null) leaves that parameter as it is. bandwidth is bit/s or an SI rate in
// CSV (bandwidth_UNIT such as bandwidth_mbps gives the unit of plain
// numbers), > 0; delay is seconds or a duration (delay_ms: milliseconds),
// ≥ 0; loss is the probability in [0, 1] that a packet crossing the link is
// lost.

// Condition is one row of a conditions file.
type Condition struct {
	T         float64 // seconds
	A, B      string
	Bandwidth float64 // bit/s; 0 leaves it
	Delay     float64 // seconds, when SetDelay
	SetDelay  bool
	Loss      float64 // when SetLoss
	SetLoss   bool
	Pos       yamlx.Pos // CSV: the row; see Row
	Row       int       // Parquet: 1-based row
	APos      yamlx.Pos // CSV: the a cell
}

// Conditions is a conditions file as read.
type Conditions struct {
	Path string
	Rows []Condition
}

// Errorf returns the input error for row r: at its a cell in CSV, its row
// in Parquet.
func (c *Conditions) Errorf(r Condition, format string, args ...any) error {
	if r.Row > 0 {
		return &RowError{File: c.Path, Row: r.Row, Msg: fmt.Sprintf(format, args...)}
	}
	p := r.Pos
	if r.APos != (yamlx.Pos{}) {
		p = r.APos
	}
	return yamlx.Errorf(c.Path, p, format, args...)
}

// ReadConditions reads a conditions file (named path: .csv or .parquet).
func ReadConditions(path string, data []byte) (*Conditions, error) {
	switch ext := strings.ToLower(path[strings.LastIndex(path, ".")+1:]); ext {
	case "csv", "parquet":
	default:
		return nil, &RowError{File: path, Msg: "not a conditions file: name it .csv or .parquet"}
	}
	raw, at, err := readRaw(path, data, "t,a,b,bandwidth,delay,loss")
	if err != nil {
		return nil, err
	}
	col := map[string]int{"t": -1, "a": -1, "b": -1, "bandwidth": -1, "delay": -1, "loss": -1}
	bwUnit, delayUnit := 1.0, 1.0
	for i, n := range raw.header {
		name := strings.ToLower(strings.TrimSpace(n))
		switch {
		case strings.HasPrefix(name, "bandwidth_"):
			u, err := ParseUnit(strings.TrimSpace(n)[len("bandwidth_"):])
			if err != nil || u.Packets {
				return nil, at(i, "column %q: the unit of a bandwidth is a bit rate such as Mbps", n)
			}
			bwUnit, name = u.BPS, "bandwidth"
		case name == "delay_ms":
			delayUnit, name = 1e-3, "delay"
		case name == "delay_s":
			name = "delay"
		}
		j, ok := col[name]
		if !ok {
			return nil, at(i, "unknown column %q (columns: t, a, b, and bandwidth, delay or loss)", n)
		}
		if j >= 0 {
			return nil, at(i, "column %q is given twice", n)
		}
		col[name] = i
	}
	for _, need := range []string{"t", "a", "b"} {
		if col[need] < 0 {
			return nil, at(0, "no %s column (columns: t, a, b, and bandwidth, delay or loss)", need)
		}
	}
	if col["bandwidth"] < 0 && col["delay"] < 0 && col["loss"] < 0 {
		return nil, at(0, "no bandwidth, delay or loss column: nothing to set")
	}
	out := &Conditions{Path: path}
	if len(raw.rows) == 0 {
		return nil, at(0, "no conditions: the file has no rows")
	}
	for _, rr := range raw.rows {
		r := Condition{Pos: rr.pos, Row: rr.row}
		cell := func(name string) (field, bool) {
			i := col[name]
			if i < 0 {
				return field{}, false
			}
			f := rr.cells[i]
			return f, f.num || strings.TrimSpace(f.s) != ""
		}
		fail := func(f field, format string, args ...any) error {
			rp := r
			if f.pos != (yamlx.Pos{}) {
				rp.Pos, rp.APos = f.pos, yamlx.Pos{}
			}
			return out.Errorf(rp, format, args...)
		}
		number := func(f field) (float64, bool) {
			if f.num {
				return f.f, true
			}
			x, err := strconv.ParseFloat(strings.TrimSpace(f.s), 64)
			return x, err == nil
		}
		a, _ := cell("a")
		b, _ := cell("b")
		r.A, r.B, r.APos = strings.TrimSpace(a.s), strings.TrimSpace(b.s), a.pos
		if r.A == "" || r.B == "" {
			return nil, fail(a, "a and b: the link's two nodes are required")
		}
		tf, ok := cell("t")
		if !ok {
			return nil, fail(tf, "t: required")
		}
		if x, ok := number(tf); ok {
			r.T = x
		} else if d, err := time.ParseDuration(strings.TrimSpace(tf.s)); err == nil {
			r.T = d.Seconds()
		} else {
			return nil, fail(tf, "t: %q is neither seconds nor a duration such as 5m", tf.s)
		}
		if r.T < 0 || math.IsNaN(r.T) || math.IsInf(r.T, 0) {
			return nil, fail(tf, "t: must be a finite time, not negative, got %g", r.T)
		}
		set := false
		if f, ok := cell("bandwidth"); ok {
			x, isNum := number(f)
			if isNum {
				x *= bwUnit
			} else {
				v, err := yamlx.ParseBandwidth(f.s)
				if err != nil {
					return nil, fail(f, "bandwidth: %v", err)
				}
				x = v
			}
			if !(x > 0) || math.IsInf(x, 0) {
				return nil, fail(f, "bandwidth: must be positive, got %g bit/s", x)
			}
			r.Bandwidth, set = x, true
		}
		if f, ok := cell("delay"); ok {
			x, isNum := number(f)
			if isNum {
				x *= delayUnit
			} else {
				d, err := time.ParseDuration(strings.TrimSpace(f.s))
				if err != nil {
					return nil, fail(f, "delay: %q is neither seconds nor a duration such as 4ms", f.s)
				}
				x = d.Seconds()
			}
			if x < 0 || math.IsNaN(x) || math.IsInf(x, 0) {
				return nil, fail(f, "delay: must not be negative, got %g s", x)
			}
			r.Delay, r.SetDelay, set = x, true, true
		}
		if f, ok := cell("loss"); ok {
			x, isNum := number(f)
			if !isNum || !(x >= 0 && x <= 1) {
				val := strings.TrimSpace(f.s)
				if f.num {
					val = strconv.FormatFloat(f.f, 'g', -1, 64)
				}
				return nil, fail(f, "loss: a probability in [0, 1], got %s", val)
			}
			r.Loss, r.SetLoss, set = x, true, true
		}
		if !set {
			return nil, fail(a, "sets nothing: give a bandwidth, a delay or a loss")
		}
		out.Rows = append(out.Rows, r)
	}
	return out, nil
}
