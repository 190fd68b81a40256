package experiments

import (
	"fmt"
	"reflect"
	"strconv"
	"strings"

	"github.com/goccy/go-yaml/ast"

	"hoplore/agents"
	"hoplore/internal/yamlx"
	"hoplore/sim"
	"hoplore/topologies"
)

// This file holds the raw YAML shapes of an experiment file. Every value
// remembers where it was written so that checks made after decoding can point
// at it.

// nodePos returns where n starts; for a block mapping, where its first key is
// (the library positions a block mapping at its first colon).
func nodePos(n ast.Node) yamlx.Pos {
	switch m := n.(type) {
	case *ast.MappingNode:
		if m.IsFlowStyle {
			return yamlx.PosOf(m)
		}
		if len(m.Values) > 0 {
			return yamlx.PosOf(m.Values[0].Key)
		}
	case *ast.MappingValueNode:
		return yamlx.PosOf(m.Key)
	}
	return yamlx.PosOf(n)
}

// mappingPairs returns the key–value pairs of a mapping node, and false when
// n is not a mapping.
func mappingPairs(n ast.Node) ([]*ast.MappingValueNode, bool) {
	switch m := n.(type) {
	case *ast.MappingNode:
		return m.Values, true
	case *ast.MappingValueNode:
		return []*ast.MappingValueNode{m}, true
	}
	return nil, false
}

// keyName returns a mapping key as a plain string.
func keyName(k ast.Node) string {
	if t := k.GetToken(); t != nil {
		return t.Value
	}
	return k.String()
}

// isScalar reports whether n is a plain value rather than a mapping or list.
func isScalar(n ast.Node) bool {
	switch n.Type() {
	case ast.StringType, ast.IntegerType, ast.FloatType, ast.LiteralType, ast.BoolType:
		return true
	}
	return false
}

// seq is a YAML list that remembers where it was written.
type seq[T any] struct {
	Items []T
	Pos   yamlx.Pos
	Set   bool
}

// DecodesAs implements yamlx.Container.
func (s *seq[T]) DecodesAs() reflect.Type { return reflect.TypeFor[[]T]() }

// UnmarshalYAML implements the YAML library's node unmarshaler.
func (s *seq[T]) UnmarshalYAML(n ast.Node) error {
	s.Pos, s.Set = nodePos(n), true
	if n.Type() != ast.SequenceType {
		return yamlx.At(s.Pos, "expected a list, got %s", strings.ToLower(n.Type().String()))
	}
	return yamlx.DecodeNode(n, &s.Items)
}

// uintYAML is a non-negative whole number (seeds).
type uintYAML struct {
	V   uint64
	Pos yamlx.Pos
	Set bool
}

// UnmarshalYAML implements the YAML library's node unmarshaler.
func (u *uintYAML) UnmarshalYAML(n ast.Node) error {
	u.Pos = yamlx.PosOf(n)
	var s yamlx.String
	if err := s.UnmarshalYAML(n); err != nil {
		return err
	}
	v, err := strconv.ParseUint(s.S, 10, 64)
	if err != nil {
		return yamlx.At(u.Pos, "%q is not a non-negative whole number", s.S)
	}
	u.V, u.Set = v, true
	return nil
}

// boolYAML is true or false.
type boolYAML struct {
	V   bool
	Pos yamlx.Pos
	Set bool
}

// UnmarshalYAML implements the YAML library's node unmarshaler.
func (b *boolYAML) UnmarshalYAML(n ast.Node) error {
	b.Pos = yamlx.PosOf(n)
	var s yamlx.String
	if n.Type() == ast.BoolType {
		s.S = n.GetToken().Value
	} else if err := s.UnmarshalYAML(n); err != nil {
		return err
	}
	switch strings.ToLower(s.S) {
	case "true", "yes", "on":
		b.V = true
	case "false", "no", "off":
		b.V = false
	default:
		return yamlx.At(b.Pos, "%q is not true or false", s.S)
	}
	b.Set = true
	return nil
}

// fileYAML is the whole experiment file.
type fileYAML struct {
	Name        yamlx.String     `yaml:"name"`
	Description yamlx.String     `yaml:"description"`
	Duration    yamlx.Duration   `yaml:"duration"`
	Warmup      yamlx.Duration   `yaml:"warmup"`
	Bin         yamlx.Duration   `yaml:"bin"`
	Replicates  yamlx.Int        `yaml:"replicates"`
	Seed        uintYAML         `yaml:"seed"`
	HopLimit    yamlx.Int        `yaml:"hop_limit"`
	Topologies  seq[topoYAML]    `yaml:"topologies"`
	Traffic     trafficYAML      `yaml:"traffic"`
	Agents      seq[agentYAML]   `yaml:"agents"`
	Failures    seq[failureYAML] `yaml:"failures"`
	Conditions  conditionsYAML   `yaml:"conditions"`
	Optimum     optimumYAML      `yaml:"optimum"`
}

// conditionsYAML is the conditions section: a link-conditions file.
type conditionsYAML struct {
	Pos            yamlx.Pos    `yaml:"-"`
	Set            bool         `yaml:"-"`
	File           yamlx.String `yaml:"file"`
	BandwidthScale yamlx.Float  `yaml:"bandwidth_scale"`
}

// UnmarshalYAML implements the YAML library's node unmarshaler.
func (c *conditionsYAML) UnmarshalYAML(n ast.Node) error {
	if _, ok := mappingPairs(n); !ok {
		return yamlx.At(nodePos(n), "conditions: a mapping {file: PATH}")
	}
	type plain conditionsYAML
	var p plain
	if err := yamlx.DecodeNode(n, &p); err != nil {
		return err
	}
	*c = conditionsYAML(p)
	c.Pos, c.Set = nodePos(n), true
	return nil
}

// optimumYAML is the optimum section: {epsilon, compute}.
type optimumYAML struct {
	Pos     yamlx.Pos   `yaml:"-"`
	Set     bool        `yaml:"-"`
	Epsilon yamlx.Float `yaml:"epsilon"`
	Compute boolYAML    `yaml:"compute"`
}

// UnmarshalYAML implements the YAML library's node unmarshaler.
func (o *optimumYAML) UnmarshalYAML(n ast.Node) error {
	if _, ok := mappingPairs(n); !ok {
		return yamlx.At(nodePos(n), "optimum: a mapping {epsilon: E, compute: true|false}")
	}
	type plain optimumYAML
	var p plain
	if err := yamlx.DecodeNode(n, &p); err != nil {
		return err
	}
	*o = optimumYAML(p)
	o.Pos, o.Set = nodePos(n), true
	return nil
}

// topoYAML is one entry of topologies: a bundled generator's name, a mapping
// {name, params...}, {file: PATH} or {inline: topology file}; a mapping may
// also give a label.
type topoYAML struct {
	Pos     yamlx.Pos
	Name    yamlx.String
	Params  []paramYAML // generator parameters in file order
	File    yamlx.String
	Inline  *topologies.File
	InlPos  yamlx.Pos
	HasName bool
	Label   yamlx.String // overrides the topology column's value
	// reading options of a file
	Keep           yamlx.String
	BandwidthScale yamlx.Float
	CapacityUnit   yamlx.String
	Attributes     []attrYAML
	AttributesPos  yamlx.Pos
}

// attrYAML is one entry of a topology file's attributes mapping.
type attrYAML struct {
	Field string
	Key   yamlx.String
	Pos   yamlx.Pos // of the field
}

type paramYAML struct {
	Name  string
	Value yamlx.Float
}

// UnmarshalYAML implements the YAML library's node unmarshaler.
func (t *topoYAML) UnmarshalYAML(n ast.Node) error {
	t.Pos = nodePos(n)
	if isScalar(n) {
		t.HasName = true
		return t.Name.UnmarshalYAML(n)
	}
	kv, ok := mappingPairs(n)
	if !ok {
		return yamlx.At(t.Pos, "a topology is a bundled name, {name: NAME, param: value...}, {file: PATH} or {inline: ...}")
	}
	var params []*ast.MappingValueNode
	for _, p := range kv {
		switch k := keyName(p.Key); k {
		case "name":
			t.HasName = true
			if err := t.Name.UnmarshalYAML(p.Value); err != nil {
				return err
			}
		case "label":
			if err := t.Label.UnmarshalYAML(p.Value); err != nil {
				return err
			}
		case "file":
			if err := t.File.UnmarshalYAML(p.Value); err != nil {
				return err
			}
		case "keep":
			if err := t.Keep.UnmarshalYAML(p.Value); err != nil {
				return err
			}
		case "bandwidth_scale":
			if err := t.BandwidthScale.UnmarshalYAML(p.Value); err != nil {
				return err
			}
		case "capacity_unit":
			if err := t.CapacityUnit.UnmarshalYAML(p.Value); err != nil {
				return err
			}
		case "attributes":
			t.AttributesPos = nodePos(p.Value)
			kv, ok := mappingPairs(p.Value)
			if !ok {
				return yamlx.At(t.AttributesPos, "attributes: a mapping {field: attribute name}, e.g. {bandwidth: capacity, lat: y}")
			}
			for _, a := range kv {
				av := attrYAML{Field: keyName(a.Key), Pos: yamlx.PosOf(a.Key)}
				if err := av.Key.UnmarshalYAML(a.Value); err != nil {
					return err
				}
				t.Attributes = append(t.Attributes, av)
			}
		case "inline":
			t.InlPos = nodePos(p.Value)
			t.Inline = new(topologies.File)
			if err := yamlx.DecodeNode(p.Value, t.Inline); err != nil {
				return err
			}
		default:
			params = append(params, p)
		}
	}
	kinds := 0
	for _, b := range []bool{t.HasName, t.File.Set, t.Inline != nil} {
		if b {
			kinds++
		}
	}
	if kinds != 1 {
		return yamlx.At(t.Pos, "a topology entry needs exactly one of name, file or inline")
	}
	if !t.File.Set {
		for _, o := range []struct {
			set  bool
			pos  yamlx.Pos
			name string
		}{{t.Keep.Set, t.Keep.Pos, "keep"}, {t.BandwidthScale.Set, t.BandwidthScale.Pos, "bandwidth_scale"},
			{t.CapacityUnit.Set, t.CapacityUnit.Pos, "capacity_unit"}, {t.Attributes != nil, t.AttributesPos, "attributes"}} {
			if o.set {
				return yamlx.At(o.pos, "%s: only with file: (how a topology file is read)", o.name)
			}
		}
	}
	if len(params) > 0 && !t.HasName {
		p := params[0]
		return yamlx.At(yamlx.PosOf(p.Key), "unknown field %q (generator parameters go with name:)", keyName(p.Key))
	}
	for _, p := range params {
		pv := paramYAML{Name: keyName(p.Key)}
		if err := pv.Value.UnmarshalYAML(p.Value); err != nil {
			return err
		}
		t.Params = append(t.Params, pv)
	}
	return nil
}

// trafficYAML is the traffic section.
type trafficYAML struct {
	Pos        yamlx.Pos        `yaml:"-"`
	Set        bool             `yaml:"-"`
	Matrix     matrixYAML       `yaml:"matrix"`
	Pairs      seq[pairYAML]    `yaml:"pairs"`
	Hotspot    hotspotYAML      `yaml:"hotspot"`
	PacketSize sizeYAML         `yaml:"packet_size"`
	Loads      seq[yamlx.Float] `yaml:"loads"`
	Flows      flowsYAML        `yaml:"flows"`
	Phases     seq[phaseYAML]   `yaml:"phases"`
}

// flowsYAML is traffic.flows: a number of flow labels per pair, or a
// mapping of flow traffic.
type flowsYAML struct {
	yamlx.Int
	Gen *flowGenYAML
}

// DecodesAs implements yamlx.Container.
func (f *flowsYAML) DecodesAs() reflect.Type { return reflect.TypeFor[flowGenYAML]() }

// UnmarshalYAML implements the YAML library's node unmarshaler.
func (f *flowsYAML) UnmarshalYAML(n ast.Node) error {
	if _, ok := mappingPairs(n); !ok {
		return f.Int.UnmarshalYAML(n)
	}
	type plain flowGenYAML
	var p plain
	if err := yamlx.DecodeNode(n, &p); err != nil {
		return err
	}
	g := flowGenYAML(p)
	g.Pos = nodePos(n)
	f.Gen = &g
	return nil
}

// flowGenYAML is flow traffic: {arrivals | share, size, rate_limit, ...}.
type flowGenYAML struct {
	Pos           yamlx.Pos       `yaml:"-"`
	Arrivals      yamlx.Rate      `yaml:"arrivals"`
	Share         yamlx.Float     `yaml:"share"`
	Size          flowSizeYAML    `yaml:"size"`
	RateLimit     yamlx.Bandwidth `yaml:"rate_limit"`
	PacketBytes   yamlx.Int       `yaml:"packet_bytes"`
	MiceBytes     yamlx.Float     `yaml:"mice_bytes"`
	ElephantBytes yamlx.Float     `yaml:"elephant_bytes"`
	Sample        yamlx.Int       `yaml:"sample"`
}

// flowSizeYAML is traffic.flows.size.
type flowSizeYAML struct {
	Pos       yamlx.Pos              `yaml:"-"`
	Set       bool                   `yaml:"-"`
	Dist      yamlx.String           `yaml:"dist"`
	Bytes     yamlx.Float            `yaml:"bytes"`
	MeanBytes yamlx.Float            `yaml:"mean_bytes"`
	Shape     yamlx.Float            `yaml:"shape"`
	Mu        yamlx.Float            `yaml:"mu"`
	Sigma     yamlx.Float            `yaml:"sigma"`
	Classes   seq[flowSizeClassYAML] `yaml:"classes"`
	File      yamlx.String           `yaml:"file"`
}

// UnmarshalYAML implements the YAML library's node unmarshaler.
func (s *flowSizeYAML) UnmarshalYAML(n ast.Node) error {
	type plain flowSizeYAML
	var p plain
	if err := yamlx.DecodeNode(n, &p); err != nil {
		return err
	}
	*s = flowSizeYAML(p)
	s.Pos, s.Set = nodePos(n), true
	return nil
}

// flowSizeClassYAML is one class of a mix of flow sizes.
type flowSizeClassYAML struct {
	Pos      yamlx.Pos   `yaml:"-"`
	Fraction yamlx.Float `yaml:"fraction"`
	Bytes    yamlx.Float `yaml:"bytes"`
}

// UnmarshalYAML implements the YAML library's node unmarshaler.
func (q *flowSizeClassYAML) UnmarshalYAML(n ast.Node) error {
	type plain flowSizeClassYAML
	var p plain
	if err := yamlx.DecodeNode(n, &p); err != nil {
		return err
	}
	*q = flowSizeClassYAML(p)
	q.Pos = nodePos(n)
	return nil
}

// matrixYAML is traffic.matrix: a bundled matrix's name, or a mapping
// naming traffic-matrix files.
type matrixYAML struct {
	yamlx.String
	File *matrixFileYAML
}

// matrixFileYAML is {file: F} or {files: [F...]} with replay and unit
// options.
type matrixFileYAML struct {
	Pos       yamlx.Pos         `yaml:"-"`
	File      yamlx.String      `yaml:"file"`
	Files     seq[yamlx.String] `yaml:"files"`
	Period    yamlx.Duration    `yaml:"period"`
	Speedup   yamlx.Float       `yaml:"speedup"`
	RateScale yamlx.Float       `yaml:"rate_scale"`
	Unit      yamlx.String      `yaml:"unit"`
}

// UnmarshalYAML implements the YAML library's node unmarshaler.
func (m *matrixYAML) UnmarshalYAML(n ast.Node) error {
	if _, ok := mappingPairs(n); !ok {
		return m.String.UnmarshalYAML(n)
	}
	type plain matrixFileYAML
	var p plain
	if err := yamlx.DecodeNode(n, &p); err != nil {
		return err
	}
	f := matrixFileYAML(p)
	f.Pos = nodePos(n)
	m.File = &f
	m.String = yamlx.String{S: "file", Pos: f.Pos, Set: true}
	return nil
}

// phaseYAML scales all rates from a time on.
type phaseYAML struct {
	Pos    yamlx.Pos      `yaml:"-"`
	At     yamlx.Duration `yaml:"at"`
	Factor yamlx.Float    `yaml:"factor"`
}

// UnmarshalYAML implements the YAML library's node unmarshaler.
func (q *phaseYAML) UnmarshalYAML(n ast.Node) error {
	type plain phaseYAML
	var p plain
	if err := yamlx.DecodeNode(n, &p); err != nil {
		return err
	}
	*q = phaseYAML(p)
	q.Pos = nodePos(n)
	return nil
}

// UnmarshalYAML implements the YAML library's node unmarshaler.
func (t *trafficYAML) UnmarshalYAML(n ast.Node) error {
	type plain trafficYAML
	var p plain
	if err := yamlx.DecodeNode(n, &p); err != nil {
		return err
	}
	*t = trafficYAML(p)
	t.Pos, t.Set = nodePos(n), true
	return nil
}

type pairYAML struct {
	Pos  yamlx.Pos    `yaml:"-"`
	From yamlx.String `yaml:"from"`
	To   yamlx.String `yaml:"to"`
	Rate yamlx.Rate   `yaml:"rate"`
}

// UnmarshalYAML implements the YAML library's node unmarshaler.
func (q *pairYAML) UnmarshalYAML(n ast.Node) error {
	type plain pairYAML
	var p plain
	if err := yamlx.DecodeNode(n, &p); err != nil {
		return err
	}
	*q = pairYAML(p)
	q.Pos = nodePos(n)
	return nil
}

type hotspotYAML struct {
	Pos      yamlx.Pos         `yaml:"-"`
	Set      bool              `yaml:"-"`
	Nodes    seq[yamlx.String] `yaml:"nodes"`
	Fraction yamlx.Float       `yaml:"fraction"`
}

// UnmarshalYAML implements the YAML library's node unmarshaler.
func (h *hotspotYAML) UnmarshalYAML(n ast.Node) error {
	type plain hotspotYAML
	var p plain
	if err := yamlx.DecodeNode(n, &p); err != nil {
		return err
	}
	*h = hotspotYAML(p)
	h.Pos, h.Set = nodePos(n), true
	return nil
}

type sizeYAML struct {
	Pos           yamlx.Pos    `yaml:"-"`
	Set           bool         `yaml:"-"`
	Dist          yamlx.String `yaml:"dist"`
	Bytes         yamlx.Int    `yaml:"bytes"`
	MeanBytes     yamlx.Float  `yaml:"mean_bytes"`
	SmallBytes    yamlx.Int    `yaml:"small_bytes"`
	LargeBytes    yamlx.Int    `yaml:"large_bytes"`
	LargeFraction yamlx.Float  `yaml:"large_fraction"`
	Redraw        yamlx.String `yaml:"redraw"`
}

// UnmarshalYAML implements the YAML library's node unmarshaler.
func (s *sizeYAML) UnmarshalYAML(n ast.Node) error {
	type plain sizeYAML
	var p plain
	if err := yamlx.DecodeNode(n, &p); err != nil {
		return err
	}
	*s = sizeYAML(p)
	s.Pos, s.Set = nodePos(n), true
	return nil
}

// agentYAML is one entry of agents: a kind's name or a mapping with kind,
// label and fields of the registered kinds (agents.Kind.Fields), decoded by
// their type; which fields a kind accepts is checked later.
type agentYAML struct {
	Pos    yamlx.Pos
	Kind   yamlx.String
	Label  yamlx.String
	Fields []agentValue // in file order
}

// agentValue is one field of an agent entry.
type agentValue struct {
	Name   string
	KeyPos yamlx.Pos
	Value  agentFieldValue
}

// agentFieldValue is the decoded value of one agent field.
type agentFieldValue interface {
	// at returns where the value was written.
	at() yamlx.Pos
	// store sets the field's value in p; ptr is agents.Field.Ptr(p).
	store(ptr any)
}

// UnmarshalYAML implements the YAML library's node unmarshaler.
func (a *agentYAML) UnmarshalYAML(n ast.Node) error {
	a.Pos = nodePos(n)
	if isScalar(n) {
		return a.Kind.UnmarshalYAML(n)
	}
	kv, ok := mappingPairs(n)
	if !ok {
		return yamlx.At(a.Pos, "an agent is a kind's name or a mapping {kind: KIND, ...}")
	}
	for _, p := range kv {
		var err error
		switch name := keyName(p.Key); name {
		case "kind":
			err = a.Kind.UnmarshalYAML(p.Value)
		case "label":
			err = a.Label.UnmarshalYAML(p.Value)
		default:
			f, ok := agents.FieldNamed(name)
			if !ok {
				return yamlx.UnknownField(yamlx.PosOf(p.Key), name)
			}
			var v agentFieldValue
			v, err = decodeAgentValue(f, p.Value)
			a.Fields = append(a.Fields, agentValue{Name: name, KeyPos: yamlx.PosOf(p.Key), Value: v})
		}
		if err != nil {
			return err
		}
	}
	return nil
}

// decodeAgentValue decodes n as a value of field f's type.
func decodeAgentValue(f *agents.Field, n ast.Node) (agentFieldValue, error) {
	v := newAgentValue(f)
	return v, v.UnmarshalYAML(n)
}

// newAgentValue returns an empty value of field f's type. It panics for a
// type experiment files cannot spell (a programming mistake in a kind's
// registration, which the package's tests catch for every registered field).
func newAgentValue(f *agents.Field) interface {
	agentFieldValue
	UnmarshalYAML(ast.Node) error
} {
	var scratch agents.Params
	switch f.Ptr(&scratch).(type) {
	case *string:
		return new(stringValue)
	case *bool:
		return new(boolYAML)
	case *int:
		return new(intValue)
	case *float64:
		return new(floatValue)
	case *sim.Time:
		return new(durationValue)
	case *[]int:
		return new(intsValue)
	case **agents.Consensus:
		return new(consensusYAML)
	case **agents.Origin:
		return new(startFromYAML)
	case *agents.Objective:
		return new(objectiveYAML)
	}
	panic(fmt.Sprintf("experiments: agent field %s has type %T, which experiment files cannot spell", f.Name, f.Ptr(&scratch)))
}

type (
	stringValue   struct{ yamlx.String }
	intValue      struct{ yamlx.Int }
	floatValue    struct{ yamlx.Float }
	durationValue struct{ yamlx.Duration }
	intsValue     struct{ seq[yamlx.Int] }
)

func (v *stringValue) at() yamlx.Pos   { return v.Pos }
func (v *boolYAML) at() yamlx.Pos      { return v.Pos }
func (v *intValue) at() yamlx.Pos      { return v.Pos }
func (v *floatValue) at() yamlx.Pos    { return v.Pos }
func (v *durationValue) at() yamlx.Pos { return v.Pos }
func (v *intsValue) at() yamlx.Pos     { return v.Pos }

func (v *stringValue) store(ptr any)   { *ptr.(*string) = v.S }
func (v *boolYAML) store(ptr any)      { *ptr.(*bool) = v.V }
func (v *intValue) store(ptr any)      { *ptr.(*int) = v.V }
func (v *floatValue) store(ptr any)    { *ptr.(*float64) = v.V }
func (v *durationValue) store(ptr any) { *ptr.(*sim.Time) = sim.Time(v.D) }
func (v *intsValue) store(ptr any) {
	hs := make([]int, len(v.Items))
	for i, h := range v.Items {
		hs[i] = h.V
	}
	*ptr.(*[]int) = hs
}

// objectiveYAML is the objective field of the learning kinds: a name, or
// {mix: {delay: W, loss: W, utilisation: W}} with weights ≥ 0, not all 0
// (see agents.Mix).
type objectiveYAML struct {
	Pos yamlx.Pos
	V   agents.Objective
}

// UnmarshalYAML implements the YAML library's node unmarshaler.
func (o *objectiveYAML) UnmarshalYAML(n ast.Node) error {
	o.Pos = nodePos(n)
	if isScalar(n) {
		var s yamlx.String
		if err := s.UnmarshalYAML(n); err != nil {
			return err
		}
		if s.S == agents.ObjectiveMix {
			return yamlx.At(o.Pos, "a mix objective is written {mix: {delay: W, loss: W, utilisation: W}}")
		}
		o.V = agents.Objective{Name: s.S}
		return nil
	}
	kv, ok := mappingPairs(n)
	if !ok {
		return yamlx.At(o.Pos, "an objective is a name or {mix: {delay: W, loss: W, utilisation: W}}")
	}
	var terms ast.Node
	for _, p := range kv {
		if name := keyName(p.Key); name != agents.ObjectiveMix {
			return yamlx.UnknownField(yamlx.PosOf(p.Key), name)
		}
		terms = p.Value
	}
	mixAt := nodePos(terms)
	tkv, ok := mappingPairs(terms)
	if !ok {
		return yamlx.At(mixAt, "is a mapping {delay: W, loss: W, utilisation: W}")
	}
	m := agents.Mix{}
	for _, p := range tkv {
		var w *float64
		switch name := keyName(p.Key); name {
		case "delay":
			w = &m.Delay
		case "loss":
			w = &m.Loss
		case "utilisation":
			w = &m.Utilisation
		default:
			return yamlx.At(yamlx.PosOf(p.Key), "unknown mix term %q (known: delay, loss, utilisation)", name)
		}
		var f yamlx.Float
		if err := f.UnmarshalYAML(p.Value); err != nil {
			return err
		}
		if f.V < 0 {
			return yamlx.At(f.Pos, "weight %s is negative, want ≥ 0", strconv.FormatFloat(f.V, 'g', -1, 64))
		}
		*w = f.V
	}
	if m == (agents.Mix{}) {
		return yamlx.At(mixAt, "needs a weight > 0 on at least one of delay, loss, utilisation")
	}
	o.V = agents.Objective{Name: agents.ObjectiveMix, Mix: m}
	return nil
}

func (o *objectiveYAML) at() yamlx.Pos { return o.Pos }
func (o *objectiveYAML) store(ptr any) { *ptr.(*agents.Objective) = o.V }

// consensusYAML is the consensus field of the per-node learners.
type consensusYAML struct {
	Pos          yamlx.Pos      `yaml:"-"`
	Set          bool           `yaml:"-"`
	Every        yamlx.Duration `yaml:"every"`
	Weight       yamlx.Float    `yaml:"weight"`
	SplitHorizon boolYAML       `yaml:"split_horizon"` // see agents.Consensus
}

// UnmarshalYAML implements the YAML library's node unmarshaler.
func (c *consensusYAML) UnmarshalYAML(n ast.Node) error {
	type plain consensusYAML
	var p plain
	if err := yamlx.DecodeNode(n, &p); err != nil {
		return err
	}
	*c = consensusYAML(p)
	c.Pos, c.Set = nodePos(n), true
	return nil
}

func (c *consensusYAML) at() yamlx.Pos { return c.Pos }

// store sets the consensus; the checker has made sure every is given.
func (c *consensusYAML) store(ptr any) {
	w := 0.5
	if c.Weight.Set {
		w = c.Weight.V
	}
	*ptr.(**agents.Consensus) = &agents.Consensus{Every: sim.Time(c.Every.D), Weight: w, SplitHorizon: c.SplitHorizon.V}
}

// failureYAML is one failure schedule: `none` or a mapping.
type failureYAML struct {
	Pos       yamlx.Pos      `yaml:"-"`
	None      bool           `yaml:"-"`
	Name      yamlx.String   `yaml:"name"`
	Detection yamlx.Duration `yaml:"detection"`
	Events    seq[eventYAML] `yaml:"events"`
	Groups    groupsYAML     `yaml:"groups"`
	Random    randomYAML     `yaml:"random"`
	// a family of single failures: each element down at At, up at Until
	Each   yamlx.String   `yaml:"each"`
	At     yamlx.Duration `yaml:"at"`
	Until  yamlx.Duration `yaml:"until"`
	Sample yamlx.Int      `yaml:"sample"`
	Seed   yamlx.Int      `yaml:"seed"`
}

// UnmarshalYAML implements the YAML library's node unmarshaler.
func (f *failureYAML) UnmarshalYAML(n ast.Node) error {
	pos := nodePos(n)
	if isScalar(n) {
		var s yamlx.String
		if err := s.UnmarshalYAML(n); err != nil {
			return err
		}
		if s.S != "none" {
			return yamlx.At(pos, "a failure schedule is `none` or a mapping {name: NAME, events: [...]}, got %q", s.S)
		}
		*f = failureYAML{Pos: pos, None: true}
		f.Name = s
		return nil
	}
	type plain failureYAML
	var p plain
	if err := yamlx.DecodeNode(n, &p); err != nil {
		return err
	}
	*f = failureYAML(p)
	f.Pos = pos
	return nil
}

type eventYAML struct {
	Pos    yamlx.Pos         `yaml:"-"`
	At     yamlx.Duration    `yaml:"at"`
	Link   seq[yamlx.String] `yaml:"link"`
	Node   yamlx.String      `yaml:"node"`
	Group  yamlx.String      `yaml:"group"`
	Action yamlx.String      `yaml:"action"`
}

// UnmarshalYAML implements the YAML library's node unmarshaler.
func (e *eventYAML) UnmarshalYAML(n ast.Node) error {
	type plain eventYAML
	var p plain
	if err := yamlx.DecodeNode(n, &p); err != nil {
		return err
	}
	*e = eventYAML(p)
	e.Pos = nodePos(n)
	return nil
}

// groupsYAML is a mapping from a shared-risk group's name to its links, in
// file order.
type groupsYAML struct {
	Pos    yamlx.Pos
	Set    bool
	Groups []groupYAML
}

type groupYAML struct {
	Name  string
	Pos   yamlx.Pos
	Links []seq[yamlx.String]
	// a geographic group: {within_km: R, of: NODE}
	Geo *geoGroupYAML
}

type geoGroupYAML struct {
	Pos      yamlx.Pos    `yaml:"-"`
	WithinKm yamlx.Float  `yaml:"within_km"`
	Of       yamlx.String `yaml:"of"`
}

// UnmarshalYAML implements the YAML library's node unmarshaler.
func (g *groupsYAML) UnmarshalYAML(n ast.Node) error {
	g.Pos, g.Set = nodePos(n), true
	kv, ok := mappingPairs(n)
	if !ok {
		return yamlx.At(g.Pos, "groups is a mapping NAME: [[a, b], [c, d], ...] or NAME: {within_km: R, of: NODE}")
	}
	for _, p := range kv {
		gr := groupYAML{Name: keyName(p.Key), Pos: yamlx.PosOf(p.Key)}
		if _, isMap := mappingPairs(p.Value); isMap {
			var geo geoGroupYAML
			if err := yamlx.DecodeNode(p.Value, &geo); err != nil {
				return err
			}
			geo.Pos = nodePos(p.Value)
			gr.Geo = &geo
			g.Groups = append(g.Groups, gr)
			continue
		}
		var links seq[seq[yamlx.String]]
		if err := links.UnmarshalYAML(p.Value); err != nil {
			return err
		}
		gr.Links = links.Items
		g.Groups = append(g.Groups, gr)
	}
	return nil
}

type randomYAML struct {
	Pos   yamlx.Pos      `yaml:"-"`
	Set   bool           `yaml:"-"`
	Scope yamlx.String   `yaml:"scope"`
	MTBF  yamlx.Duration `yaml:"mtbf"`
	MTTR  yamlx.Duration `yaml:"mttr"`
}

// UnmarshalYAML implements the YAML library's node unmarshaler.
func (r *randomYAML) UnmarshalYAML(n ast.Node) error {
	type plain randomYAML
	var p plain
	if err := yamlx.DecodeNode(n, &p); err != nil {
		return err
	}
	*r = randomYAML(p)
	r.Pos, r.Set = nodePos(n), true
	return nil
}
