# Reference timing for the nightly job's speed target: the same work as
#   nightly -returns returns.csv -method ledoit-wolf -window <all> -dense out.csv
# done with pandas and scikit-learn: read the wide CSV, fit Ledoit-Wolf, write
# the dense covariance as CSV (header asset,<id>,...; one row per asset; full
# float64 precision: pandas writes repr() of each float when no float_format
# is given).
#
# Versions: /usr/bin/python3 with Debian's pandas 1.5.3, scikit-learn 1.2.1,
# numpy 1.24.2. Run:
#   /usr/bin/time -v /usr/bin/python3 testdata/programs/lw_reference.py returns.csv out.csv
# The exact calls: pandas.read_csv(path, index_col=0);
# sklearn.covariance.LedoitWolf().fit(X) (assume_centered=False, the 1/n
# divisor of Ledoit & Wolf 2004); pandas.DataFrame.to_csv(out, index_label="asset").
# Missing returns, if any, are filled with the column mean, as riskmodel.Build
# does for the shrinkage methods (the benchmark input has none).
import sys

import pandas as pd
from sklearn.covariance import LedoitWolf


def main(src, dst):
    df = pd.read_csv(src, index_col=0)
    x = df.fillna(df.mean()).to_numpy()
    lw = LedoitWolf().fit(x)
    out = pd.DataFrame(lw.covariance_, index=df.columns, columns=df.columns)
    out.to_csv(dst, index_label="asset")
    print("shrinkage %.6f, %d dates x %d assets" % (lw.shrinkage_, x.shape[0], x.shape[1]), file=sys.stderr)


if __name__ == "__main__":
    main(sys.argv[1], sys.argv[2])
