package results

import (
	"encoding/binary"
	"errors"
	"hash/crc32"
	"reflect"
	"testing"
)

func TestPartCodecRoundTrip(t *testing.T) {
	for _, i := range []int{0, 7} {
		want := synthTables(i)
		want.Run.LossRate = ptr(0) // a null and a zero stay apart
		want.Series[3].DeliveryMeanS = nil
		got, err := decodePart(encodePart(want))
		if err != nil {
			t.Fatal(err)
		}
		if !reflect.DeepEqual(got, want) {
			t.Errorf("run %d: round trip differs", i)
		}
	}
	empty := &RunTables{Run: RunRow{Dims: Dims{RunID: "e"}}}
	got, err := decodePart(encodePart(empty))
	if err != nil || !reflect.DeepEqual(got, empty) {
		t.Errorf("empty run: got %+v, %v", got, err)
	}
}

// oldRun is a runs row as an older or newer tool might store it: one column
// fewer (delivered), one unknown (legacy_score), one of another kind (nodes
// as a string).
type oldRun struct {
	Generated   int64    `parquet:"generated"`
	LegacyScore *float64 `parquet:"legacy_score,optional"`
	Nodes       string   `parquet:"nodes"`
	LossRate    *float64 `parquet:"loss_rate,optional"`
}

func TestPartCodecMatchesColumnsByName(t *testing.T) {
	d := Dims{Experiment: "e", RunID: "r", Seed: 1 << 63}
	b := []byte(partMagic)
	b = append(b, partVersion)
	b = planDims.encode(b, reflect.ValueOf(d), 1, false)
	b = planOf(reflect.TypeFor[oldRun]()).encode(b, reflect.ValueOf(oldRun{Generated: 5, LegacyScore: ptr(2), Nodes: "x", LossRate: ptr(0.5)}), 1, false)
	b = planSeries.encode(b, reflect.ValueOf([]SeriesRow(nil)), 0, true)
	b = planLinks.encode(b, reflect.ValueOf([]LinkRow(nil)), 0, true)
	b = planRecovery.encode(b, reflect.ValueOf([]RecoveryRow(nil)), 0, true)
	b = binary.LittleEndian.AppendUint32(b, crc32.Checksum(b, crcTable))
	got, err := decodePart(b)
	if err != nil {
		t.Fatal(err)
	}
	want := RunRow{Dims: d, Generated: 5, LossRate: ptr(0.5)}
	if !reflect.DeepEqual(got.Run, want) {
		t.Errorf("got %+v, want %+v", got.Run, want)
	}
}

// FuzzDecodePart: arbitrary bytes never panic and never decode without
// error unless they are a valid part.
func FuzzDecodePart(f *testing.F) {
	good := encodePart(smallTables())
	f.Add(good)
	f.Add(good[:len(good)/2])
	f.Add([]byte(partMagic))
	f.Fuzz(func(t *testing.T, b []byte) {
		got, err := decodePart(b)
		if err != nil {
			if !errors.Is(err, errCorruptPart) {
				t.Fatalf("error %v does not wrap errCorruptPart", err)
			}
			return
		}
		if again := encodePart(got); len(again) == 0 {
			t.Fatal("decoded part does not encode")
		}
	})
}

// FuzzDecodeSections fuzzes the sections behind a valid header and
// checksum, where the checksum no longer guards the decoder.
func FuzzDecodeSections(f *testing.F) {
	good := encodePart(smallTables())
	f.Add(good[len(partMagic)+1 : len(good)-4])
	f.Fuzz(func(t *testing.T, body []byte) {
		b := append([]byte(partMagic), partVersion)
		b = append(b, body...)
		b = binary.LittleEndian.AppendUint32(b, crc32.Checksum(b, crcTable))
		if _, err := decodePart(b); err != nil && !errors.Is(err, errCorruptPart) {
			t.Fatalf("error %v does not wrap errCorruptPart", err)
		}
	})
}

// smallTables is a run with few rows, a handy fuzzing seed.
func smallTables() *RunTables {
	t := synthTables(3)
	t.Series, t.Links, t.Recoveries = t.Series[:3], t.Links[:2], t.Recoveries[:1]
	return t
}
