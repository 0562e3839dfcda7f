// Command gentable builds and certifies a string-spectrum table for the
// default settings and writes it to the file the cosmicstrings package
// embeds:
//
//	go run ./models/cosmicstrings/internal/gentable -o models/cosmicstrings/defaulttable.bin
//	go run ./models/cosmicstrings/internal/gentable -model bos -o models/cosmicstrings/bostable.bin
//	go run ./models/cosmicstrings/internal/gentable -model metastable -o models/cosmicstrings/metatable.bin
package main

import (
	"flag"
	"fmt"
	"os"
	"runtime"
	"time"

	"tautline/models/cosmicstrings"
)

func main() {
	model := flag.String("model", "one-scale", "table to build: one-scale, bos or metastable")
	out := flag.String("o", "models/cosmicstrings/defaulttable.bin", "output file")
	workers := flag.Int("workers", runtime.NumCPU(), "worker goroutines")
	seed := flag.Uint64("seed", 1, "certification seed")
	flag.Parse()
	start := time.Now()
	opt := cosmicstrings.BuildOptions{Workers: *workers, Seed: *seed}
	var (
		what, cert string
		write      func(string) error
	)
	switch *model {
	case "one-scale":
		s := cosmicstrings.DefaultSettings()
		t, err := cosmicstrings.BuildTable(s, opt)
		fail(err)
		what, cert, write = fmt.Sprintf("settings %s (table hash %.12s)", s, s.TableHash()), t.Certificate().String(), t.WriteFile
	case "bos":
		s := cosmicstrings.DefaultBOSSettings()
		t, err := cosmicstrings.BuildBOSTable(s, opt)
		fail(err)
		what, cert, write = fmt.Sprintf("settings %s (table hash %.12s)", s, s.TableHash()), t.Certificate().String(), t.WriteFile
	case "metastable":
		s := cosmicstrings.DefaultMetastableSettings()
		t, err := cosmicstrings.BuildMetastableTable(s, opt)
		fail(err)
		what, cert, write = fmt.Sprintf("settings %s (table hash %.12s)", s, s.TableHash()), t.Certificate().String(), t.WriteFile
	default:
		fail(fmt.Errorf("-model must be one-scale, bos or metastable, got %q", *model))
	}
	fail(write(*out))
	fmt.Printf("wrote %s for %s in %s\ncertificate: %s\n", *out, what, time.Since(start).Round(time.Millisecond), cert)
}

func fail(err error) {
	if err != nil {
		fmt.Fprintln(os.Stderr, "gentable:", err)
		os.Exit(1)
	}
}
