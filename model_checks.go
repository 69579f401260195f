package riskmodel

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"github.com/riskmodel/riskmodel/factor"
)

// digestLine is the content of model.sha256 for the manifest bytes js, in
// the format of sha256sum, so that `sha256sum -c model.sha256` checks it too.
func digestLine(js []byte) string {
	sum := sha256.Sum256(js)
	return hex.EncodeToString(sum[:]) + "  " + manifestFile + "\n"
}

// checkDigest verifies model.json against model.sha256: the manifest holds
// the units and the checksums of every other file, so an edit to it (a
// periods_per_year changed by hand, say) must not pass unseen.
func checkDigest(dir string, js []byte) error {
	want, err := os.ReadFile(filepath.Join(dir, digestFile))
	if errors.Is(err, os.ErrNotExist) {
		return fmt.Errorf("riskmodel: load model %s: %w: no %s, so %s is not covered by a checksum (a folder from before format %s, or damaged)",
			dir, ErrInvalidModel, digestFile, manifestFile, storeFormat)
	}
	if err != nil {
		return fmt.Errorf("riskmodel: load model: %w", err)
	}
	if string(want) != digestLine(js) {
		return fmt.Errorf("riskmodel: load model %s: %w: %s does not match %s (edited or damaged)", dir, ErrInvalidModel, manifestFile, digestFile)
	}
	return nil
}

// checkInfo verifies that the factor model's diagnostics agree with the
// other files before factor.NewModel sees them (it panics on a length that
// does not match, as a programming error).
func checkInfo(info *factor.Info, assets []string, names []string, bad func(string, ...any) error) error {
	n, k := len(assets), len(names)
	if info.Assets != nil && !slices.Equal(info.Assets, assets) {
		return bad("%s lists %d assets that differ from the %d of %s", factorInfoFile, len(info.Assets), n, assetsFile)
	}
	if info.FactorNames != nil && !slices.Equal(info.FactorNames, names) {
		return bad("factor names in %s differ from %s", factorInfoFile, manifestFile)
	}
	sp := info.Specific
	if len(sp.Shrink) > 0 && len(sp.Shrink) != max(1, len(sp.Groups)) {
		return bad("%s: %d specific shrinkage intensities for %d groups", factorInfoFile, len(sp.Shrink), len(sp.Groups))
	}
	if al := info.Alignment; al != nil && (len(al.Rotation) != k*k || len(al.Angles) > k) {
		return bad("%s: a rotation of %d elements and %d angles for %d factors", factorInfoFile, len(al.Rotation), len(al.Angles), k)
	}
	return nil
}

// checkNames verifies that factor names are distinct and not empty.
func checkNames(names []string, bad func(string, ...any) error) error {
	seen := make(map[string]bool, len(names))
	for _, s := range names {
		if s == "" || seen[s] {
			return bad("factor name %q is empty or repeated in %s", s, manifestFile)
		}
		seen[s] = true
	}
	return nil
}

// checkSymmetric verifies that a square matrix read element by element is
// exactly symmetric: both triangles are stored and must agree.
func checkSymmetric(a []float64, k int, file string, bad func(string, ...any) error) error {
	for i := 0; i < k; i++ {
		for j := i + 1; j < k; j++ {
			if math.Float64bits(a[i*k+j]) != math.Float64bits(a[j*k+i]) {
				return bad("%s: element (%d, %d) differs from (%d, %d)", file, i, j, j, i)
			}
		}
	}
	return nil
}

// panicError turns a panic while decoding a folder into an error: the checks
// above cover every inconsistency known; this keeps one not yet known from
// crashing a job that only wanted to read the model.
func panicError(dir string, r any) error {
	return fmt.Errorf("riskmodel: load model %s: %w: inconsistent files (%s)", dir, ErrInvalidModel, strings.TrimSpace(fmt.Sprint(r)))
}
