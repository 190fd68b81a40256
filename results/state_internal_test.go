package results

import (
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"github.com/parquet-go/parquet-go"
)

// A delay state's Q table keeps the layout of earlier versions (no loss or
// utilisation column), and reads back with those fields 0; a state with an
// objective carries both columns and reads them back exactly.
func TestStateTableLayouts(t *testing.T) {
	rows := []QRow{
		{Node: "a", Destination: "b", Neighbour: "b", Channel: 0, Value: 0.004, Confidence: 1, Best: 0.003, RecoveryRate: -0.1},
		{Node: "b", Destination: "a", Neighbour: "a", Channel: 1, Value: 0.005},
	}
	for _, objective := range []string{"", "mix/delay=1/loss=5"} {
		dir := t.TempDir()
		in := make([]QRow, len(rows))
		copy(in, rows)
		if objective != "" {
			in[0].ChannelLoss, in[0].LossBeyond, in[0].Utilisation = 0.2, 0.1, 0.32
		}
		ls := &LearnedState{Info: StateInfo{RunID: "r1", Agent: "q", Kind: "q-routing", Variant: "plain", Objective: objective}, Q: in}
		if err := writeState(dir, ls, "test"); err != nil {
			t.Fatal(err)
		}
		got, err := readLearnedState(dir, "r1")
		if err != nil {
			t.Fatal(err)
		}
		if got.Info.Objective != objective || !reflect.DeepEqual(got.Q, in) {
			t.Errorf("objective %q: read back %+v %+v, want %+v", objective, got.Info.Objective, got.Q, in)
		}
		f, err := os.Open(filepath.Join(dir, StateDir, got.Info.Table))
		if err != nil {
			t.Fatal(err)
		}
		st, _ := f.Stat()
		pf, err := parquet.OpenFile(f, st.Size())
		if err != nil {
			t.Fatal(err)
		}
		_, hasLoss := pf.Schema().Lookup("loss_beyond")
		_, hasUtil := pf.Schema().Lookup("utilisation")
		f.Close()
		if want := objective != ""; hasLoss != want || hasUtil != want {
			t.Errorf("objective %q: loss column %v, utilisation column %v, want %v", objective, hasLoss, hasUtil, want)
		}
		b, _ := os.ReadFile(StatePath(dir, "r1"))
		if objective == "" && strings.Contains(string(b), `"objective"`) {
			t.Errorf("a delay state file names an objective: %s", b)
		}
	}
}
