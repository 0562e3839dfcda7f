package cosmicstrings

import _ "embed"

// embeddedTable is the certified table for DefaultSettings, regenerated with
//
//	go run ./models/cosmicstrings/internal/gentable -o models/cosmicstrings/defaulttable.bin
//
// from the repository root (about a minute on two cores).
//
//go:embed defaulttable.bin
var embeddedTable []byte
