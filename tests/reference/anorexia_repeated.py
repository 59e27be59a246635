"""Reference values for a repeated-measures block with a between-subject
factor on open data: anorexia (tests/data/open/anorexia.csv; source in
SOURCES.md), each patient weighed before and after treatment.

The file is reshaped to one row per weighing: subject P01..P72 in file
order, `time` = pre (Prewt) or post (Postwt), `Treat` between subjects.
Values from pingouin's `mixed_anova` (within time, between Treat) and, for
the time effect, scipy: with two occasions the within-subject F of the
mixed design is the square of the t statistic for the mean within-subject
difference tested against the pooled within-group variance of the
differences (the one-way ANOVA on the differences, whose intercept test is
that t). Run: python3 tests/reference/anorexia_repeated.py
(needs numpy, pandas, scipy, pingouin; no network).
"""

import json
import pathlib

import numpy as np
import pandas as pd
import pingouin as pg
import scipy
import scipy.stats as st

HERE = pathlib.Path(__file__).resolve().parent
DATA = HERE.parent / "data" / "open" / "anorexia.csv"


def long_frame():
    wide = pd.read_csv(DATA)
    rows = []
    for i, r in wide.iterrows():
        subject = f"P{i + 1:02d}"
        rows.append({"subject": subject, "Treat": r["Treat"], "time": "pre", "weight": r["Prewt"]})
        rows.append({"subject": subject, "Treat": r["Treat"], "time": "post", "weight": r["Postwt"]})
    return wide, pd.DataFrame(rows)


def time_t_squared(wide):
    """t for the mean of the group means of the differences (unweighted,
    as Type III), against the pooled within-group variance."""
    d = wide["Postwt"] - wide["Prewt"]
    groups = [d[wide["Treat"] == g].to_numpy() for g in ["Cont", "CBT", "FT"]]
    n = np.array([len(g) for g in groups])
    means = np.array([g.mean() for g in groups])
    ss_within = sum(((g - g.mean()) ** 2).sum() for g in groups)
    df = int(n.sum() - len(groups))
    mse = ss_within / df
    estimate = means.mean()
    se = np.sqrt(mse * (1.0 / n).sum()) / len(groups)
    t = estimate / se
    return float(t * t), df, float(2 * st.t.sf(abs(t), df))


def main():
    wide, df = long_frame()
    aov = pg.mixed_anova(data=df, dv="weight", within="time", between="Treat", subject="subject")
    rows = {r["Source"]: r for _, r in aov.iterrows()}
    out = {
        "source": "tests/data/open/anorexia.csv (MASS anorexia; Hand et al. 1993, data set 285)",
        "versions": {
            "pingouin": pg.__version__,
            "pandas": pd.__version__,
            "scipy": scipy.__version__,
            "numpy": np.__version__,
        },
    }
    for name in ["Treat", "time", "Interaction"]:
        r = rows[name]
        out[name] = {
            "ss [pingouin mixed_anova]": float(r["SS"]),
            "df [pingouin mixed_anova]": [int(r["DF1"]), int(r["DF2"])],
            "f [pingouin mixed_anova]": float(r["F"]),
            "p [pingouin mixed_anova]": float(r["p_unc"]),
        }
    f, dfd, p = time_t_squared(wide)
    out["time"]["f [scipy: squared t of the mean difference, pooled within-group variance]"] = f
    out["time"]["df_den [same]"] = dfd
    out["time"]["p [scipy t.sf]"] = p
    (HERE / "anorexia_repeated.json").write_text(json.dumps(out, indent=1, sort_keys=True) + "\n")


if __name__ == "__main__":
    main()
