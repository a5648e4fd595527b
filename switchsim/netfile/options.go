package netfile

// ReadOptions are what the readers of netlists from elsewhere (transistor
// netlist cards, IEEE 1364 switch-level modules) take besides their bytes
// (README, "Netlists from elsewhere"); the .sw reader needs none of them.
// The loader (switchsim/load) fills them from a command's flags and passes
// them to the reader it picks for the file.
type ReadOptions struct {
	Top           string   // the subcircuit or module to read; "" takes the only one
	Power, Ground []string // rail names (any case); nil: the readers' defaults
	// Inputs are the ports driven as inputs; the loader gives the names of
	// the steps file's apply line when no --inputs was given, nil when
	// there is neither.
	Inputs []string
	// NMOSModels and PMOSModels type device models: names or * patterns.
	NMOSModels, PMOSModels []string
	// Include reads the file that an include statement of file names:
	// relative to file, never outside where file was loaded from (the
	// served folder), size-limited. It returns the included file's name,
	// for positions and for the includes it makes in turn, and its bytes.
	// Errors are a diag.List naming the included file. Nil: no includes.
	Include func(file, name string) (string, []byte, error)
}
