package strings

import _ "embed"

// embeddedTable is the certified table for DefaultSettings, regenerated with
//
//	go run ./models/strings/internal/gentable -o models/strings/defaulttable.bin
//
// from the repository root (about a minute on two cores).
//
//go:embed defaulttable.bin
var embeddedTable []byte
