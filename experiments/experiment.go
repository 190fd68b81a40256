package experiments

import (
	"errors"
	"fmt"
	"path/filepath"
	"sync"

	"github.com/goccy/go-yaml"

	"hoplore/agents"
	"hoplore/demands"
	"hoplore/internal/inputerr"
	"hoplore/internal/yamlx"
	"hoplore/sim"
)

// Defaults of an experiment file's optional fields.
const (
	DefaultReplicates = 1
	DefaultSeed       = 1
	// DefaultBins is the number of time-series bins when bin is not given:
	// bin = duration / DefaultBins.
	DefaultBins = 100
	// DefaultDetection is a failure schedule's detection delay when not given.
	DefaultDetection = 50 * sim.Millisecond
	// DefaultPacketBytes is the fixed packet size when packet_size is not given.
	DefaultPacketBytes = 1000
	// DefaultHotspotFraction is the share of each source's packets addressed
	// to the hot nodes when hotspot.fraction is not given.
	DefaultHotspotFraction = 0.5
)

// Experiment is a parsed and checked experiment file.
type Experiment struct {
	Name string
	// Fields tagged hash:"-" do not decide runs and are left out of Hash.
	Description string `hash:"-"`
	Path        string `hash:"-"` // the file as named to Parse
	// Hash is the hex SHA-256 of the parsed experiment's canonical form:
	// everything that decides its runs, including the contents of the
	// topology and matrix files it reads, and nothing else (comments,
	// formatting, key order and the description do not count). Two
	// experiments with the same Hash describe the same runs.
	Hash string `hash:"-"`
	// TopologyFiles are the topology files the experiment references, as
	// written in it (relative to its directory unless absolute).
	TopologyFiles []string `hash:"-"`

	Duration, Warmup, Bin sim.Time
	Replicates            int
	Seed                  uint64
	HopLimit              int

	Topologies []*Topology
	Traffic    Traffic
	// Loads are the normalised loads of the grid; nil when the traffic gives
	// absolute per-pair rates.
	Loads    []float64
	Agents   []agents.Params
	Failures []*Failure
	// Conditions set links' bandwidth, delay or loss from given times on,
	// in every run (the conditions: file's rows, in file order).
	Conditions []Condition
	// Optimum says whether and how precisely the model optimum of every
	// cell is computed (the opt_* columns).
	Optimum Optimum

	// Starts[i] are the training states agent i's start_from may load (nil
	// without start_from), by run index.
	Starts [][]LearnedState

	runsOnce sync.Once
	runs     []*Run
}

// OptimumAutoNodes is the largest topology on which the model optimum is
// computed unless the file asks for it explicitly: its cost grows about as
// N²·E log N per phase (tens of seconds per cell beyond this size).
const OptimumAutoNodes = 200

// Optimum is the optimum section of an experiment file.
type Optimum struct {
	// Compute is false when the file turns the model optimum off (its
	// columns are then null).
	Compute bool
	// Always is true when the file asks for the optimum explicitly
	// (compute: true): it is then computed on topologies of any size, not
	// only on those of at most OptimumAutoNodes nodes.
	Always bool
	// Epsilon is the relative gap at which the solvers stop, in (0, 0.5].
	Epsilon float64
}

// Topology is one topology of the grid, built and compiled once and shared
// (read-only) by every run on it.
type Topology struct {
	Label string // the topology column's value
	Graph *sim.Graph
	Net   *sim.Net `hash:"-"` // compiled from Graph

	// failures are the experiment's failure schedules on this topology, a
	// family (Failure.Each) expanded into one schedule per element, and
	// scheduled[f] schedule f's events resolved on this topology (nil for
	// random-only or none schedules).
	failures  []*Failure
	scheduled [][]sim.FailureEvent
	hot       []int // hotspot nodes
	pairs     [][]float64

	shape [][]float64 // traffic matrix before scaling
	scale float64     // SaturationScale of shape
	// flowScale is SaturationScale of shape in flows per second (mean flow
	// size), with flow traffic.
	flowScale float64
	// shapeTotal and shapeHops are the sums of shape and of shape × hop
	// count over all pairs, for estimates.
	shapeTotal, shapeHops float64
	conditions            []sim.LinkCondition // Experiment.Conditions resolved on this topology
	// periods are the matrices of a replay before scaling, in
	// Traffic.Periods order; scale then makes the busiest one's busiest
	// channel saturated at load 1
	periods [][][]float64
}

// Traffic is the experiment's traffic model.
type Traffic struct {
	Matrix string // uniform, gravity, hotspot or pairs
	Pairs  []Pair
	// Absolute is true when pairs give rates and there is no loads list: the
	// rates are used as they are.
	Absolute bool
	Hotspot  Hotspot
	Size     sim.SizeDist
	Redraw   bool
	Flows    int // flow labels per pair; 0 means sim.DefaultFlows
	// FlowGen is flow traffic, nil without; see FlowTraffic.
	FlowGen *FlowTraffic
	// Phases scale every rate from a time on: load that rises or falls
	// during a run.
	Phases []sim.RatePhase
	// Periods are the matrices of a traffic-matrix file (Matrix "file"): one
	// for a single matrix, several for a replay, in time order.
	Periods []MatrixPeriod
	// Replay is true when the file's matrices play as consecutive periods.
	Replay bool
}

// MatrixPeriod is one matrix of a traffic-matrix file, from At on: its
// demands in packets per second (units converted with the mean packet size,
// times rate_scale when the rates are absolute). A period without demands
// sends nothing (a gap in a replay).
type MatrixPeriod struct {
	At      sim.Time
	Demands []Demand
}

// Demand is one row of a traffic-matrix file.
type Demand struct {
	From, To string
	Rate     float64 // packets per second
	// at reports a problem with the source (target false) or target
	at func(target bool, format string, args ...any) error
}

// Condition is one row of the conditions file: from At on, the link A–B
// takes the parameters given (see sim.LinkCondition).
type Condition struct {
	At        sim.Time
	A, B      string
	Bandwidth float64 // bit/s, × bandwidth_scale; 0 leaves it
	Delay     sim.Time
	SetDelay  bool
	Loss      float64
	SetLoss   bool
	at        func(format string, args ...any) error
}

// Pair is one explicit source–destination flow.
type Pair struct {
	From, To string
	Rate     float64 // packets per second; 0 when not given (shape weight 1)
}

// Hotspot configures the hotspot matrix.
type Hotspot struct {
	Nodes    []string // empty: the node with the most attached capacity
	Fraction float64  // share of each source's packets addressed to the hot nodes
}

// Failure is one failure schedule.
type Failure struct {
	Name      string // "none" for the schedule without failures
	Detection sim.Time
	Events    []Event
	Groups    []Group
	Random    *Random
	// Each, when set, makes the schedule a family: one schedule per element,
	// expanded on each topology (see Each).
	Each *Each
}

// Each is a family of single failures: every element of a kind (or a
// sample of them) goes down at At and, when Until > 0, back up at Until,
// each in a schedule of its own named NAME/ELEMENT: "a-b" for a link (its
// end nodes in the topology's order), the node's name, the group's name.
type Each struct {
	Kind   string // links, nodes or groups
	At     sim.Time
	Until  sim.Time // 0: stays down
	Sample int      // 0: every element; else this many, drawn without replacement
	Seed   uint64   // the sample's random stream
}

// Event is one scheduled failure event as written.
type Event struct {
	At    sim.Time
	Link  [2]string // when a link changes
	Node  string    // when a node changes
	Group string    // when a shared-risk group changes
	Up    bool
}

// Group is a shared-risk group: links that fail together, listed, or every
// link with an end within WithinKm kilometres of node Of (by the
// topology's coordinates) when WithinKm > 0.
type Group struct {
	Name     string
	Links    [][2]string
	WithinKm float64
	Of       string
}

// Random describes random failures: every element of the scope alternates
// between up times drawn from an exponential distribution with mean MTBF and
// down times with mean MTTR, independently, for the whole run.
type Random struct {
	Scope      string // links or nodes
	MTBF, MTTR sim.Time
}

// Load reads and parses the experiment file at path.
func Load(path string) (*Experiment, error) {
	data, err := yamlx.ReadFile(path)
	if err != nil {
		var fe *yamlx.FileError
		if errors.As(err, &fe) {
			err = fe.Err
		}
		return nil, &ReadError{Path: path, Err: err}
	}
	return Parse(path, data)
}

// Parse decodes and checks the experiment file data, named path in messages;
// topology files are read relative to path's directory. Every problem is
// returned as a *yamlx.Error naming FILE:LINE:COL.
func Parse(path string, data []byte) (*Experiment, error) {
	return parse(path, data, osFiles{})
}

func parse(path string, data []byte, files fileSource) (e *Experiment, err error) {
	defer func() {
		// The YAML library can panic on hostile input: that is bad input too.
		if r := recover(); r != nil {
			e, err = nil, yamlx.Errorf(path, yamlx.Pos{}, "experiments: cannot read YAML: %v", r)
		}
	}()
	var raw fileYAML
	if err := yamlx.Decode(path, data, &raw); err != nil {
		if yamlx.CheckShape(path, data) == nil && looksLikeTopology(data) {
			return nil, yamlx.Errorf(path, yamlx.Pos{Line: 1, Col: 1}, "this is a topology file (it has nodes and links), not an experiment: "+
				"name it in an experiment as topologies: [{file: %s}], or see it with hoplore topologies show %s", filepath.Base(path), path)
		}
		return nil, err
	}
	c := &checker{file: path, files: files, raw: &raw}
	e, err = c.experiment()
	if err != nil {
		var re *demands.RowError // a Parquet row: the file and row name it
		if errors.As(err, &re) {
			return nil, re
		}
		return nil, yamlx.NameField(data, yamlx.Convert(path, err))
	}
	e.Hash = canonicalHash(e)
	e.Path = path
	return e, nil
}

// ReadError is an experiment file that cannot be read.
type ReadError struct {
	Path string
	Err  error
}

func (e *ReadError) Error() string {
	return fmt.Sprintf("experiments: cannot read %s: %v", e.Path, unwrapPathErr(e.Err))
}

func (e *ReadError) Unwrap() error { return e.Err }

// Is marks the error as bad input (inputerr.ErrBadInput).
func (e *ReadError) Is(target error) bool { return target == inputerr.ErrBadInput }

// looksLikeTopology reports whether data is a YAML mapping with top-level
// nodes and links and no agents: a topology file given where an experiment
// was expected.
func looksLikeTopology(data []byte) bool {
	var top map[string]any
	if err := yaml.Unmarshal(data, &top); err != nil {
		return false
	}
	_, nodes := top["nodes"]
	_, links := top["links"]
	_, agents := top["agents"]
	return nodes && links && !agents
}
