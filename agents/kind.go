package agents

import (
	"errors"
	"fmt"
	"slices"
	"strconv"
	"strings"
	"time"

	"hoplore/sim"
)

// Kind describes one agent kind: everything the rest of hoplore needs to
// read it from an experiment file, check it, label it, build it and estimate
// its cost. Each kind's file registers its Kind with Register; see the
// package documentation, "Adding an agent kind".
type Kind struct {
	// Name is the kind as written in experiment files, e.g. "q-routing".
	Name string
	// Order places the kind in documentation order (Kinds, error
	// messages): ascending, then by Name.
	Order int
	// Central kinds run one controller for the whole network: the agent
	// New returns implements sim.Central and receives telemetry snapshots
	// that are control_delay old, so a central kind must have a
	// control_delay field (Register panics otherwise) and runs take their
	// sim.Config.ControlDelay from it.
	Central bool
	// Fields are the experiment-file fields the kind accepts besides kind
	// and label, in documentation order; canonical labels list changed
	// fields in this order.
	Fields []Field
	// Check, when not nil, checks what no single field can: relations
	// between fields. It runs after every field's own check and returns a
	// *ParamError naming the field it blames.
	Check func(p *Params) error
	// New builds the agent for one run on net from parameters that passed
	// Validate.
	New func(p Params, net *sim.Net) (sim.Agent, error)
	// Cost estimates what the agent adds to one run's cost beyond its data
	// packets (nil: nothing), for `hoplore check`.
	Cost func(p *Params, r RunSize) Cost
}

// RunSize is what a cost estimate knows of a run.
type RunSize struct {
	Nodes, Links, Channels int
	Seconds                float64 // simulated duration
	Packets                float64 // data packets generated per second, all pairs
	MeanHops               float64 // mean shortest-path hop count of a data packet
}

// Cost is an agent's share of a run's cost.
type Cost struct {
	Events float64 // engine events beyond the data packets' own
	Bytes  float64 // memory the agent holds at its peak
}

// Events per hop of a packet (transmission end, arrival), for estimates.
const eventsPerHop = 2

// Field is one experiment-file field of an agent kind: its name, its type
// (the type Ptr points to), its default, its check and its text form in
// canonical labels. Make one with NewField.
type Field struct {
	// Name is the field's name in experiment files, e.g. "learning_rate".
	Name string

	ptr        func(p *Params) any
	setDefault func(p *Params)
	isDefault  func(p *Params) bool
	check      func(p *Params) error
	text       func(p *Params) string
}

// Value is a type an agent field may have: the types experiment files can
// spell.
type Value interface {
	string | bool | int | float64 | sim.Time | []int | *Consensus | *Origin | Objective
}

// NewField returns the field name of type T, stored where get points in
// Params, with default def. check (nil: any value is fine) returns what is
// wrong with a value as a message without the field name, such as
// "must be in (0, 1], got 1.5", or a *ParamError naming a sub-field such as
// "consensus.weight". In canonical labels a value is written as strconv
// writes it (float64 in the shortest 'g' form), a sim.Time as a Go
// duration, a []int joined by "x", a *Consensus as every/weight, with
// "/split-horizon" when set, an Objective by its String method.
func NewField[T Value](name string, get func(p *Params) *T, def T, check func(v T) error) Field {
	f := Field{
		Name: name,
		ptr:  func(p *Params) any { return get(p) },
		setDefault: func(p *Params) {
			*get(p) = cloneValue(def)
		},
		isDefault: func(p *Params) bool { return equalValue(*get(p), def) },
		text:      func(p *Params) string { return textValue(*get(p)) },
	}
	if check != nil {
		f.check = func(p *Params) error {
			err := check(*get(p))
			if err == nil {
				return nil
			}
			var pe *ParamError
			if errors.As(err, &pe) {
				return pe
			}
			return &ParamError{Field: name, Msg: err.Error()}
		}
	}
	return f
}

// Ptr returns a pointer to the field's value in p: a *string, *bool, *int,
// *float64, *sim.Time, *[]int, **Consensus, **Origin or *Objective.
func (f *Field) Ptr(p *Params) any { return f.ptr(p) }

// Check returns a *ParamError when the field's value in p is wrong.
func (f *Field) Check(p *Params) error {
	if f.check == nil {
		return nil
	}
	return f.check(p)
}

// Text returns the field's value in p as canonical labels write it.
func (f *Field) Text(p *Params) string { return f.text(p) }

// IsDefault reports whether the field's value in p is its default.
func (f *Field) IsDefault(p *Params) bool { return f.isDefault(p) }

func cloneValue[T Value](v T) T {
	switch x := any(v).(type) {
	case []int:
		return any(slices.Clone(x)).(T)
	case *Consensus:
		if x != nil {
			c := *x
			return any(&c).(T)
		}
	case *Origin:
		if x != nil {
			c := *x
			return any(&c).(T)
		}
	}
	return v
}

func equalValue[T Value](a, b T) bool {
	switch x := any(a).(type) {
	case []int:
		return slices.Equal(x, any(b).([]int))
	case *Consensus:
		y := any(b).(*Consensus)
		if x == nil || y == nil {
			return x == y
		}
		return *x == *y
	case *Origin:
		y := any(b).(*Origin)
		if x == nil || y == nil {
			return x == y
		}
		return *x == *y
	}
	return any(a) == any(b)
}

func textValue[T Value](v T) string {
	switch x := any(v).(type) {
	case string:
		return x
	case bool:
		return strconv.FormatBool(x)
	case int:
		return strconv.Itoa(x)
	case float64:
		return fmtFloat(x)
	case sim.Time:
		return fmtDuration(x)
	case []int:
		s := make([]string, len(x))
		for i, h := range x {
			s[i] = strconv.Itoa(h)
		}
		return strings.Join(s, "x")
	case *Consensus:
		if x == nil {
			return "none"
		}
		s := fmtDuration(x.Every) + "/" + fmtFloat(x.Weight)
		if x.SplitHorizon {
			s += "/split-horizon"
		}
		return s
	case *Origin:
		if x == nil {
			return "none"
		}
		return x.Results + ":" + x.Agent
	case Objective:
		return x.String()
	}
	panic(fmt.Sprintf("agents: no text form for %T", v))
}

func fmtFloat(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

func fmtDuration(t sim.Time) string { return time.Duration(t).String() }

// registry holds every registered kind.
var registry = map[string]*Kind{}

// Register adds kind k; each kind's file calls it from init. It panics on a
// programming mistake: an empty or repeated name, no constructor, a field
// named kind or label or listed twice, a field whose type differs from a
// field of the same name in another kind, or a central kind without a
// control_delay field.
func Register(k Kind) {
	if k.Name == "" || k.New == nil {
		panic(fmt.Sprintf("agents: kind %q registered without a name or constructor", k.Name))
	}
	if _, dup := registry[k.Name]; dup {
		panic(fmt.Sprintf("agents: kind %q registered twice", k.Name))
	}
	k.Fields = append(slices.Clone(k.Fields), pinField)
	seen := map[string]bool{}
	for _, f := range k.Fields {
		if f.Name == "" || f.Name == "kind" || f.Name == "label" || seen[f.Name] || f.ptr == nil {
			panic(fmt.Sprintf("agents: kind %q: bad or repeated field %q", k.Name, f.Name))
		}
		seen[f.Name] = true
		var a, b Params
		for _, other := range All() {
			for _, g := range other.Fields {
				if g.Name == f.Name && fmt.Sprintf("%T", g.Ptr(&a)) != fmt.Sprintf("%T", f.Ptr(&b)) {
					panic(fmt.Sprintf("agents: field %q is %T in kind %q but %T in kind %q",
						f.Name, f.Ptr(&b), k.Name, g.Ptr(&a), other.Name))
				}
			}
		}
	}
	if k.Central && !seen["control_delay"] {
		panic(fmt.Sprintf("agents: central kind %q has no control_delay field", k.Name))
	}
	k.Fields = slices.Clone(k.Fields)
	registry[k.Name] = &k
}

// Lookup returns the registered kind called name.
func Lookup(name string) (*Kind, bool) {
	k, ok := registry[name]
	return k, ok
}

// All returns every registered kind in documentation order.
func All() []*Kind {
	ks := make([]*Kind, 0, len(registry))
	for _, k := range registry {
		ks = append(ks, k)
	}
	slices.SortFunc(ks, func(a, b *Kind) int {
		if a.Order != b.Order {
			return a.Order - b.Order
		}
		return strings.Compare(a.Name, b.Name)
	})
	return ks
}

// Kinds returns every kind's name in documentation order.
func Kinds() []string {
	var names []string
	for _, k := range All() {
		names = append(names, k.Name)
	}
	return names
}

// FieldNamed returns a field called name of any registered kind, for
// readers that must know a field's type before they know its kind. Fields
// of one name have one type (Register checks it).
func FieldNamed(name string) (*Field, bool) {
	for _, k := range All() {
		for i := range k.Fields {
			if k.Fields[i].Name == name {
				return &k.Fields[i], true
			}
		}
	}
	return nil, false
}

// Field returns kind k's field called name.
func (k *Kind) Field(name string) (*Field, bool) {
	for i := range k.Fields {
		if k.Fields[i].Name == name {
			return &k.Fields[i], true
		}
	}
	return nil, false
}

// Estimate returns what the agent p describes adds to the cost of a run of
// size r (nothing for an unknown kind or one without an estimate).
func (p *Params) Estimate(r RunSize) Cost {
	k, ok := Lookup(p.Kind)
	if !ok || k.Cost == nil {
		return Cost{}
	}
	return k.Cost(p, r)
}
