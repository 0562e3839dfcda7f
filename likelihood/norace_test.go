//go:build !race

package likelihood

const raceEnabled = false
