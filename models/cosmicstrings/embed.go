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

// embeddedBOSTable is the certified BOS table for DefaultBOSSettings,
// regenerated with
//
//	go run ./models/cosmicstrings/internal/gentable -model bos -o models/cosmicstrings/bostable.bin
//
//go:embed bostable.bin
var embeddedBOSTable []byte

// embeddedMetaTable is the certified metastable table for
// DefaultMetastableSettings, regenerated with
//
//	go run ./models/cosmicstrings/internal/gentable -model metastable -o models/cosmicstrings/metatable.bin
//
//go:embed metatable.bin
var embeddedMetaTable []byte
