// Command gentable builds and certifies the string-spectrum table for the
// default settings and writes it to the file the strings package embeds:
//
//	go run ./models/cosmicstrings/internal/gentable -o models/cosmicstrings/defaulttable.bin
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
	out := flag.String("o", "models/cosmicstrings/defaulttable.bin", "output file")
	workers := flag.Int("workers", runtime.NumCPU(), "worker goroutines")
	seed := flag.Uint64("seed", 1, "certification seed")
	flag.Parse()
	start := time.Now()
	s := cosmicstrings.DefaultSettings()
	t, err := cosmicstrings.BuildTable(s, cosmicstrings.BuildOptions{Workers: *workers, Seed: *seed})
	if err != nil {
		fmt.Fprintln(os.Stderr, "gentable:", err)
		os.Exit(1)
	}
	if err := t.WriteFile(*out); err != nil {
		fmt.Fprintln(os.Stderr, "gentable:", err)
		os.Exit(1)
	}
	fmt.Printf("wrote %s for settings %s (table hash %.12s) in %s\ncertificate: %v\n", *out, s, s.TableHash(), time.Since(start).Round(time.Millisecond), t.Certificate())
}
