// Command gentable builds and certifies the string-spectrum table for the
// default settings and writes it to the file the strings package embeds:
//
//	go run ./models/strings/internal/gentable -o models/strings/defaulttable.bin
package main

import (
	"flag"
	"fmt"
	"os"
	"runtime"
	"time"

	cosmic "tautline/models/strings"
)

func main() {
	out := flag.String("o", "models/strings/defaulttable.bin", "output file")
	workers := flag.Int("workers", runtime.NumCPU(), "worker goroutines")
	seed := flag.Uint64("seed", 1, "certification seed")
	flag.Parse()
	start := time.Now()
	s := cosmic.DefaultSettings()
	t, err := cosmic.BuildTable(s, cosmic.BuildOptions{Workers: *workers, Seed: *seed})
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
