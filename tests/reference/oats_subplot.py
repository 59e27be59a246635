"""The subplot stratum of the oats split plot (open data, tests/data/open/oats.csv:
six blocks B, three varieties V on whole plots, four nitrogen rates N on subplots;
Yates 1935), shared by mixed_contrasts.py and mixed_trend.py.

OLS on all 72 subplots with the whole plots (B x V) as fixed effects leaves the
subplot error (45 residual df). The variety x nitrogen cells are in cell-means
coding, so a contrast over the nitrogen marginal means (each averaged over the
varieties with equal weight) is a row of L built from the cell columns.

Importing this module only fits the model; it writes nothing."""
import os
import warnings

import numpy as np
import pandas as pd
import statsmodels.formula.api as smf
from statsmodels.tools.sm_exceptions import SingularMatrixWarning

here = os.path.dirname(os.path.abspath(__file__))
oats = pd.read_csv(os.path.join(here, "..", "data", "open", "oats.csv"))

varieties = ["Golden.rain", "Marvellous", "Victory"]
rates = ["0.0cwt", "0.2cwt", "0.4cwt", "0.6cwt"]
oats["cell"] = oats["V"] + "|" + oats["N"]
cells = [v + "|" + n for v in varieties for n in rates]
# Cell-means coding for V x N plus whole-plot (B x V) effects summing to zero
# within each variety. patsy adds one column per variety that the cell means
# already span (rank 27 of 30 columns, 45 residual df, checked below); every row
# tested with it is a contrast among the nitrogen means, so estimable, and its
# estimate and SE do not depend on the generalised inverse.
with warnings.catch_warnings():
    warnings.simplefilter("ignore", category=SingularMatrixWarning)
    sub = smf.ols("Y ~ 0 + C(cell, levels=%r) + C(B, Sum):C(V)" % cells, data=oats).fit()
assert np.linalg.matrix_rank(sub.model.exog) == 27 and sub.df_resid == 45
names = list(sub.params.index)


def nitrogen_row(weights):
    """L over the fit's columns for the sum over rates n of weights[n] times the
    nitrogen mean at n (`weights` maps rate names to weights)."""
    row = np.zeros(len(names))
    for n, w in weights.items():
        for v in varieties:
            row[names.index("C(cell, levels=%r)[%s|%s]" % (cells, v, n))] += w / 3.0
    return row
