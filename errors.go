package riskmodel

import "errors"

// The root package's sentinel errors, for errors.Is. Errors from files
// arrive wrapped in a *FileError (fileerror.go) that says where.

// Errors returned when a panel cannot be built. They are wrapped with context;
// test with errors.Is.
var (
	ErrEmpty          = errors.New("no data")
	ErrDuplicate      = errors.New("duplicate observation")
	ErrImpossible     = errors.New("simple return at or below -1 is impossible")
	ErrNonFinite      = errors.New("value is not finite")
	ErrUnsorted       = errors.New("dates are not strictly increasing")
	ErrUnknownAsset   = errors.New("unknown asset")
	ErrPeriodsPerYear = errors.New("periods per year must be positive and finite")
)

// Errors returned when a file cannot be read. They are wrapped in a
// *FileError that says where the problem is; test with errors.Is. The panel
// errors ErrEmpty, ErrDuplicate, ErrImpossible and ErrNonFinite are used for
// files too.
var (
	ErrMissingColumn    = errors.New("required column is missing")
	ErrUnexpectedColumn = errors.New("unexpected column")
	ErrMissingValue     = errors.New("required value is empty")
	ErrBadDate          = errors.New("not a calendar date of the form YYYY-MM-DD")
	ErrBadNumber        = errors.New("not a number")
	ErrColumnType       = errors.New("column has an unsupported type")
	ErrNotParquet       = errors.New("not a Parquet file")
	ErrTruncated        = errors.New("file is truncated")
	ErrFormat           = errors.New("unknown file format: the name must end in .csv or .parquet")
)

// Errors of ReadDenseCSV, wrapped in a *FileError.
var (
	ErrNotSymmetric = errors.New("matrix is not symmetric")
	ErrDenseLayout  = errors.New("row does not match the header")
)

// Errors of the pipeline, the store, the metadata and the file limits.
var (
	// ErrTooSparse is returned for a long file whose distinct dates and assets
	// span a table far larger than its rows, which a real return history does not
	// do; it keeps a hostile file from claiming memory out of proportion to its
	// size.
	ErrTooSparse = errors.New("too few rows for the dates × assets table they span")

	// ErrNoGroupColumn reports a grouping column that no asset of a metadata
	// file has.
	ErrNoGroupColumn = errors.New("no asset has this metadata column")

	// ErrPageTooLarge reports a Parquet page larger than MaxParquetPage bytes
	// uncompressed.
	ErrPageTooLarge = errors.New("Parquet page is larger than the limit of MaxParquetPage bytes")

	// ErrNoHoldings reports a portfolio with no weight on any asset.
	ErrNoHoldings = errors.New("portfolio holds nothing")

	// ErrPercentWeights reports holdings whose weights sum to about 100:
	// percent typed where fractions of capital are meant.
	ErrPercentWeights = errors.New("weights look like percent; give fractions of capital (0.02 = 2 %)")

	// ErrWeightRange reports a weight no fraction of capital can have, or a
	// negative weight in a portfolio declared long-only.
	ErrWeightRange = errors.New("weight is out of range")

	// ErrWeightSum reports a long-only portfolio whose weights do not sum to 1.
	ErrWeightSum = errors.New("weights do not sum to 1")

	// ErrInvalidModel reports a model that fails validation or whose files are
	// inconsistent.
	ErrInvalidModel = errors.New("invalid model")

	// ErrNoCurrent reports a store with no current model yet.
	ErrNoCurrent = errors.New("store has no current model")

	// ErrMethod reports an unknown method name.
	ErrMethod = errors.New("unknown method")

	// ErrRecordTooLarge reports a CSV record longer than MaxCSVRecord bytes.
	ErrRecordTooLarge = errors.New("CSV record is longer than the limit of MaxCSVRecord bytes")
)

// Errors of the store's lock and of the checks of a return history's units
// and frequency.
var (
	// ErrLocked reports a store whose lock another job held for longer than
	// the wait allowed.
	ErrLocked = errors.New("store is locked by another job")

	// ErrFrequency reports dates whose spacing matches no regular frequency,
	// or a periods-per-year value that contradicts the spacing.
	ErrFrequency = errors.New("return frequency does not match the dates")
)
