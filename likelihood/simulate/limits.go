package simulate

// MaxBins is the most frequency bins a simulated data set may have: the
// most a data set's description may declare (likelihood reads at most 65536),
// so that what simulate writes can be read back.
const MaxBins = 1 << 16

// MaxSamples is the most posterior samples, over all bins, a simulated
// data set may store: at about 20 bytes a CSV row, 20 million samples are
// some 400 MB, under the 512 MiB a samples table may be when it is read
// back.
const MaxSamples = 20_000_000
