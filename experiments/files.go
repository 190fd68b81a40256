package experiments

import (
	"embed"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path"
	"path/filepath"
	"sort"
	"strings"

	"hoplore/internal/inputerr"
	"hoplore/internal/yamlx"
	"hoplore/sim"
	"hoplore/topologies"
)

// fileSource reads the topology files an experiment references.
type fileSource interface {
	// resolve returns the path of name, written in the experiment file exp.
	resolve(exp, name string) string
	read(p string) ([]byte, error)
	// load builds the graph of the topology file p whose bytes are data.
	load(p string, data []byte, o topologies.ReadOptions) (*sim.Graph, error)
}

// osFiles reads from the file system, relative to the experiment's directory.
type osFiles struct{}

func (osFiles) resolve(exp, name string) string {
	if filepath.IsAbs(name) {
		return name
	}
	return filepath.Join(filepath.Dir(exp), filepath.FromSlash(name))
}

// read reads a regular file of bounded size (yamlx.ReadFile); the error is
// the reason alone, as callers name the file.
func (osFiles) read(p string) ([]byte, error) {
	b, err := yamlx.ReadFile(p)
	var fe *yamlx.FileError
	if errors.As(err, &fe) {
		return nil, fe.Err
	}
	return b, err
}

func (osFiles) load(p string, data []byte, o topologies.ReadOptions) (*sim.Graph, error) {
	return parseTopology(p, data, o)
}

// parseTopology builds the topology file p from its bytes as topologies.Read
// does: GraphML or network-design XML when its name ends in .graphml or
// .xml, YAML otherwise.
func parseTopology(p string, data []byte, o topologies.ReadOptions) (*sim.Graph, error) {
	g, _, err := topologies.Read(p, data, o)
	return g, err
}

//go:embed bundled/*.yaml
var bundledFS embed.FS

const bundledDir = "bundled"

// embedFiles reads bundled topology files beside the bundled experiments.
type embedFiles struct{}

func (embedFiles) resolve(exp, name string) string {
	return path.Join(path.Dir(exp), filepath.ToSlash(name))
}

func (embedFiles) read(p string) ([]byte, error) { return fs.ReadFile(bundledFS, p) }

func (embedFiles) load(p string, data []byte, o topologies.ReadOptions) (*sim.Graph, error) {
	return parseTopology(p, data, o)
}

// unwrapPathErr drops the path from an *fs.PathError (the message names it
// already).
func unwrapPathErr(err error) error {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		if errors.Is(pe.Err, fs.ErrNotExist) {
			return errors.New("no such file")
		}
		return pe.Err
	}
	return err
}

func baseName(p string) string {
	b := path.Base(filepath.ToSlash(p))
	return strings.TrimSuffix(b, path.Ext(b))
}

// Bundled returns the names of the bundled experiments, sorted.
func Bundled() []string {
	entries, err := fs.ReadDir(bundledFS, bundledDir)
	if err != nil {
		panic(err) // the embedded directory always exists
	}
	var names []string
	for _, en := range entries {
		name := en.Name()
		data, err := fs.ReadFile(bundledFS, path.Join(bundledDir, name))
		if err != nil || !isExperiment(data) {
			continue
		}
		names = append(names, strings.TrimSuffix(name, ".yaml"))
	}
	sort.Strings(names)
	return names
}

// isExperiment tells an experiment file from a topology file among the
// bundled files: an experiment has a top-level agents: key.
func isExperiment(data []byte) bool {
	for _, line := range strings.Split(string(data), "\n") {
		if strings.HasPrefix(line, "agents:") {
			return true
		}
	}
	return false
}

// BundledYAML returns the text of the bundled experiment name.
func BundledYAML(name string) ([]byte, error) {
	for _, b := range Bundled() {
		if b == name {
			return fs.ReadFile(bundledFS, path.Join(bundledDir, name+".yaml"))
		}
	}
	return nil, fmt.Errorf("experiments: no bundled experiment %q (bundled: %s)", name, strings.Join(Bundled(), ", "))
}

// BundledFile is one file of a bundled experiment.
type BundledFile struct {
	Name string // path relative to the experiment's directory
	Data []byte
}

// BundledFiles returns the files the bundled experiment name consists of:
// NAME.yaml first, then the topology files it references, named as it names
// them. Written side by side into one directory they run as they are.
func BundledFiles(name string) ([]BundledFile, error) {
	data, err := BundledYAML(name)
	if err != nil {
		return nil, err
	}
	e, err := LoadBundled(name)
	if err != nil {
		return nil, err
	}
	out := []BundledFile{{Name: name + ".yaml", Data: data}}
	for _, f := range e.TopologyFiles {
		b, err := fs.ReadFile(bundledFS, embedFiles{}.resolve(path.Join(bundledDir, name+".yaml"), f))
		if err != nil {
			return nil, fmt.Errorf("experiments: bundled %s: %w", name, err)
		}
		out = append(out, BundledFile{Name: f, Data: b})
	}
	return out, nil
}

// LoadBundled parses the bundled experiment name. Its topology files are read
// from the bundled files, and messages name it bundled/NAME.yaml.
func LoadBundled(name string) (*Experiment, error) {
	data, err := BundledYAML(name)
	if err != nil {
		return nil, err
	}
	return parse(path.Join(bundledDir, name+".yaml"), data, embedFiles{})
}

// Resolve finds the experiment arg names: a file when one exists at that path
// (or when arg ends in .yaml or .yml), else a bundled experiment, else an
// error listing the bundled names.
func Resolve(arg string) (*Experiment, error) {
	if fi, err := os.Stat(arg); err == nil && !fi.IsDir() {
		return Load(arg)
	}
	if ext := strings.ToLower(filepath.Ext(arg)); ext == ".yaml" || ext == ".yml" {
		return Load(arg)
	}
	for _, b := range Bundled() {
		if b == arg {
			return LoadBundled(arg)
		}
	}
	return nil, &NotFoundError{Arg: arg}
}

// NotFoundError says an argument is neither a file nor a bundled experiment.
type NotFoundError struct{ Arg string }

func (e *NotFoundError) Error() string {
	return fmt.Sprintf("experiments: %q is neither a file nor a bundled experiment (bundled: %s)", e.Arg, strings.Join(Bundled(), ", "))
}

// Is marks the error as bad input (inputerr.ErrBadInput).
func (e *NotFoundError) Is(target error) bool { return target == inputerr.ErrBadInput }
