package riskmodel

// AssetInfo is one row of an asset metadata file: the identifier, its sector
// and any optional columns. Attributes holds every column by its header name
// (including "sector" and the optional ones), so a report can group assets by
// any column the file has.
type AssetInfo struct {
	Asset      string
	Sector     string
	SizeBucket string  // empty when the file has no size_bucket column
	MarketCap  float64 // NaN when the file has no market_cap column or the cell is empty
	Attributes map[string]string
}

// Holding is one row of a holdings file: an asset and its weight in a
// portfolio or benchmark (0.02 = 2 % of the portfolio's value).
type Holding struct {
	Asset  string
	Weight float64
}
