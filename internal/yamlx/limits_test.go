package yamlx

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"

	"hoplore/internal/inputerr"
)

// Hostile shapes are refused before the YAML library parses them, at the
// offending position; ordinary files pass.
func TestCheckShape(t *testing.T) {
	deepBlock := ""
	for i := range MaxDepth + 1 {
		deepBlock += strings.Repeat(" ", i) + "k:\n"
	}
	tests := []struct {
		name, data, want string
	}{
		{"flow brackets", "name: " + strings.Repeat("[", 50000), "1:70: nested more than 64 levels deep"},
		{"flow braces", "a: " + strings.Repeat("{b: ", 100), "nested more than 64"},
		{"block indentation", deepBlock, "65:65: nested more than 64"},
		{"sequence entries on one line", strings.Repeat("- ", 100) + "x", "nested more than 64"},
		{"alias expansion", "a: &a [x, x]\n" + strings.Repeat("b: [*a, *a, *a, *a]\n", 5), "more than 16 alias uses"},
		{"ordinary", "name: demo\ntopologies:\n  - {name: ring, nodes: 8}\nagents: [shortest-path, {kind: q-routing, explore: 0.05}]\n", ""},
		{"brackets in strings and comments", "a: '[[[[' # [[[[[\nb: \"{{{{ \\\" [[[[\"\nc: x*y\n" + strings.Repeat("d: '[[[[[[[[[[[[[['\n", 10), ""},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			err := CheckShape("f.yaml", []byte(tc.data))
			switch {
			case tc.want == "" && err != nil:
				t.Errorf("refused: %v", err)
			case tc.want != "" && (err == nil || !strings.Contains(err.Error(), tc.want)):
				t.Errorf("got %v, want an error containing %q", err, tc.want)
			}
		})
	}
}

// A UTF-8 byte order mark is ignored.
func TestDecodeBOM(t *testing.T) {
	var v struct {
		Name string `yaml:"name"`
	}
	if err := Decode("f.yaml", append([]byte{0xEF, 0xBB, 0xBF}, "name: demo\n"...), &v); err != nil || v.Name != "demo" {
		t.Errorf("got %+v, %v", v, err)
	}
}

// Only regular files of bounded size are read: a folder, a device, a FIFO
// (which would block forever) and an oversized file are refused unread.
func TestReadFileRefuses(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "fifo")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Fatal(err)
	}
	big := filepath.Join(dir, "big.yaml")
	f, err := os.Create(big)
	if err != nil {
		t.Fatal(err)
	}
	if err := f.Truncate(MaxFileBytes + 1); err != nil { // sparse: no disk used
		t.Fatal(err)
	}
	f.Close()
	ok := filepath.Join(dir, "ok.yaml")
	if err := os.WriteFile(ok, []byte("\xEF\xBB\xBFname: x\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct{ path, want string }{
		{dir, "not a regular file"},
		{"/dev/zero", "not a regular file"},
		{fifo, "not a regular file"},
		{big, "above the limit of 256 MiB"},
		{filepath.Join(dir, "absent.yaml"), "no such file"},
	} {
		_, err := ReadFile(tc.path)
		var fe *FileError
		if !errors.As(err, &fe) || !errors.Is(err, inputerr.ErrBadInput) || !strings.Contains(err.Error(), tc.want) || !strings.Contains(err.Error(), tc.path) {
			t.Errorf("%s: got %v, want a *FileError naming the file and %q", tc.path, err, tc.want)
		}
	}
	if b, err := ReadFile(ok); err != nil || string(b) != "name: x\n" {
		t.Errorf("regular file: %q, %v", b, err)
	}
}

// Errors of value decoders name the field whose value they refuse.
func TestNameField(t *testing.T) {
	var v struct {
		Warmup Duration `yaml:"warmup"`
		Agents []struct {
			Kind string  `yaml:"kind"`
			Rate Float   `yaml:"learning_rate"`
			Size []Float `yaml:"sizes"`
		} `yaml:"agents"`
		Loads []Float `yaml:"loads"`
	}
	tests := []struct{ data, want string }{
		{"warmup: 5\n", `f.yaml:1:9: warmup: "5" is not a duration`},
		{"agents: [{kind: x, learning_rate: .nan}]\n", `learning_rate: ".nan" is not a number`},
		{"agents: [{kind: x, sizes: [1, nan]}]\n", `sizes: "nan" is not a number`},
		{"loads:\n  - 0.5\n  # a comment\n  - nan\n", `f.yaml:4:5: loads[…]: "nan" is not a number`},
	}
	for _, tc := range tests {
		err := Decode("f.yaml", []byte(tc.data), &v)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%q: got %v, want %q", tc.data, err, tc.want)
		}
	}
}
