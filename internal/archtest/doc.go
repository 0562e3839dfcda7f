// Package archtest holds no code, only a test: it reads the import lines
// of every package of the module with go/build and checks them against the
// rules and the import graph that ARCHITECTURE.md states (each import
// points to a lower layer, models never see sampling, only the command
// imports its configuration and report packages, and so on), and that the
// document's package table and graph list exactly the packages there are.
package archtest
