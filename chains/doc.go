// Package chains stores what a sampler finds: chains written row by row
// while a run goes, matrices exported for NumPy, and a metadata file that
// says how every output was made.
//
// # Chain files (CSV)
//
// A chain file is plain text, UTF-8, one header line then one line per
// sample:
//
//	# step,walker,ln_post,ln_like,log10_A,gamma
//	0,0,12.5,14.25,-14.6,4.1
//	0,1,11.75,13.5,-14.9,3.8
//
// The header is "# " followed by the column names separated by commas;
// names are non-empty and contain no comma, quote, '#' or white space. Each
// data line holds exactly one number per column, separated by commas, with
// no spaces, ended by "\n". Numbers are written in the shortest form that
// reads back to the same float64 (strconv.AppendFloat with format 'g' and
// precision -1), so a file's bytes depend only on the values; non-finite
// values are written NaN, +Inf and -Inf. The column convention used by the
// command is step, walker, ln_post, ln_like, then the sampled parameters in
// model order (integers such as step are stored as exact float64 values).
//
// Python reads a chain with one standard call: the header is a comment to
// numpy.loadtxt, and numpy.genfromtxt takes the names from it:
//
//	x = numpy.loadtxt("chain.csv", delimiter=",")               # 2-D array
//	x = numpy.genfromtxt("chain.csv", delimiter=",", names=True)  # named columns
//
// Writer appends rows through a buffer; Flush makes everything appended so
// far durable (fsync) and returns the file length, which a checkpoint
// records; StartFlush only has the rows written and their writeback to the
// disk started, without waiting.
// After a crash, Resume truncates the file back to that length and appends
// from there, so an interrupted-and-resumed run ends byte-identical to an
// uninterrupted one (given a deterministic sampler).
//
// # Matrices (NumPy .npy)
//
// WriteNPY writes a row-major float64 matrix in the NumPy .npy format
// (dtype "<f8", C order; format version 1.0, data aligned to 64 bytes),
// read in Python with numpy.load("file.npy"). A chain exported this way
// keeps the CSV column order.
//
// # Metadata (JSON)
//
// WriteMeta writes a Meta value as indented JSON, whose fields are listed on
// the type; MetaSchema numbers the layout and grows when fields change
// meaning. Python reads it with json.load.
//
// Every whole-file output (NPY, metadata) goes through WriteFileAtomic: a
// temporary file in the same directory, fsync, rename over the target,
// fsync of the directory, so that a reader sees either the old file or the
// complete new one and a failed write leaves nothing behind.
package chains
