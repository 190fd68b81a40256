package agents_test

import (
	"slices"
	"strings"
	"testing"

	"hoplore/agents"
	"hoplore/sim"
)

func TestKindsInDocumentationOrder(t *testing.T) {
	want := []string{agents.ShortestPathKind, agents.CentralAdaptiveKind, agents.CentralQKind, agents.QRoutingKind, agents.QNetworkKind}
	got := agents.Kinds()
	// kinds added later come after or between these, never reorder them
	var known []string
	for _, k := range got {
		if slices.Contains(want, k) {
			known = append(known, k)
		}
	}
	if !slices.Equal(known, want) {
		t.Errorf("Kinds() = %v, want %v in this order", got, want)
	}
	for i := 0; i < 3; i++ {
		if again := agents.Kinds(); !slices.Equal(again, got) {
			t.Fatalf("Kinds() = %v, then %v", got, again)
		}
	}
}

// TestRegisterRejects checks that a kind the rest of hoplore could not use
// safely is refused when its file registers it.
func TestRegisterRejects(t *testing.T) {
	build := func(agents.Params, *sim.Net) (sim.Agent, error) { return nil, nil }
	every := agents.NewField("every", func(p *agents.Params) *sim.Time { return &p.Every }, sim.Second, nil)
	tests := []struct {
		name string
		k    agents.Kind
		want string
	}{
		{"central without control_delay", agents.Kind{Name: "test-central", Central: true, Fields: []agents.Field{every}, New: build},
			"no control_delay field"},
		{"repeated name", agents.Kind{Name: agents.QRoutingKind, New: build}, "registered twice"},
		{"no constructor", agents.Kind{Name: "test-none"}, "without a name or constructor"},
		{"field named label", agents.Kind{Name: "test-label", New: build,
			Fields: []agents.Field{agents.NewField("label", func(p *agents.Params) *string { return &p.Metric }, "", nil)}},
			"bad or repeated field"},
		{"field twice", agents.Kind{Name: "test-twice", New: build, Fields: []agents.Field{every, every}}, "bad or repeated field"},
		{"field of another type", agents.Kind{Name: "test-type", New: build,
			Fields: []agents.Field{agents.NewField("explore", func(p *agents.Params) *int { return &p.K }, 0, nil)}},
			`field "explore" is *int`},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			defer func() {
				r := recover()
				msg, _ := r.(string)
				if !strings.Contains(msg, tt.want) {
					t.Errorf("Register panicked with %v, want a message containing %q", r, tt.want)
				}
				if _, ok := agents.Lookup(tt.k.Name); ok && strings.HasPrefix(tt.k.Name, "test-") {
					t.Errorf("kind %s was registered after all", tt.k.Name)
				}
			}()
			agents.Register(tt.k)
		})
	}
}

// TestCentralKindsTakeControlDelay checks that every central kind has the
// field runs take their control delay from.
func TestCentralKindsTakeControlDelay(t *testing.T) {
	for _, k := range agents.All() {
		_, has := k.Field("control_delay")
		if k.Central != has {
			t.Errorf("kind %s: central %v, control_delay field %v", k.Name, k.Central, has)
		}
	}
}
