"""Reference values for the univariate repeated-measures ANOVA with two
within-subject factors and with a between-subject factor (tests/repeated_core.rs).

Data: INVENTED, drawn here from a seeded generator and rounded to two decimals;
the rounded values are written into the JSON and are the data the Rust test
analyses. Values from pingouin (rm_anova with two within factors, sphericity,
epsilon, mixed_anova), statsmodels AnovaRM and scipy, each named in the JSON
beside its value. Run: python3 tests/reference/repeated_measures.py
(needs numpy, scipy, pandas, statsmodels, pingouin; no network).
"""

import json
import pathlib

import numpy as np
import pandas as pd
import pingouin as pg
import scipy
import scipy.stats as st
import statsmodels
from statsmodels.stats.anova import AnovaRM

A_LEVELS, B_LEVELS = 3, 4
GROUP_SIZES = [4, 5, 6]  # unequal on purpose


def invented_data():
    """15 subjects in 3 groups; occasions A (3) x B (4), A varying slowest.
    Subject effects, a group shift, A, B and A x B effects, and errors whose
    variance grows with B and that are correlated along B within a subject,
    so that sphericity does not hold."""
    rng = np.random.default_rng(20261204)
    a_eff = np.array([0.0, 2.5, 4.0])
    b_eff = np.array([0.0, 1.0, 3.0, 3.5])
    ab_eff = rng.normal(0.0, 1.0, (A_LEVELS, B_LEVELS))
    subjects = []
    for group, size in enumerate(GROUP_SIZES):
        for _ in range(size):
            base = 50.0 + 3.0 * group + rng.normal(0.0, 4.0)
            slope = rng.normal(0.0, 1.5)  # subject-specific trend over B
            y = []
            for a in range(A_LEVELS):
                e_prev = 0.0
                for b in range(B_LEVELS):
                    e = 0.7 * e_prev + rng.normal(0.0, 1.0 + 0.6 * b)
                    e_prev = e
                    value = base + a_eff[a] + b_eff[b] + ab_eff[a, b] + slope * b + e
                    y.append(round(float(value), 2))
            subjects.append({"group": group, "y": y})
    return subjects


def long_frame(subjects, occasions_of_a=range(A_LEVELS)):
    rows = []
    for s, subj in enumerate(subjects):
        for a in occasions_of_a:
            for b in range(B_LEVELS):
                rows.append(
                    {"subject": s, "group": subj["group"], "A": a, "B": b,
                     "y": subj["y"][a * B_LEVELS + b]}
                )
    return pd.DataFrame(rows)


def anderson_second_order(chi_sq, d, nu):
    """Anderson (2003, section 10.7) second-order Mauchly p-value, written
    here from the formula of mixed-models spec 7.2 (d = number of contrasts)."""
    rho = 1 - (2 * d * d + d + 2) / (6 * d * nu)
    f = d * (d + 1) / 2 - 1
    omega = (d + 2) * (d - 1) * (d - 2) * (2 * d**3 + 6 * d**2 + 3 * d + 2) / (
        288 * d * d * nu * nu * rho * rho
    )
    p1 = st.chi2.sf(chi_sq, f)
    return float(p1 + omega * (st.chi2.sf(chi_sq, f + 4) - p1))


def two_within(subjects):
    """All subjects as one group; within A x B."""
    df = long_frame(subjects)
    n = len(subjects)
    aov = pg.rm_anova(data=df, dv="y", within=["A", "B"], subject="subject", detailed=True)
    sm = AnovaRM(df, depvar="y", subject="subject", within=["A", "B"]).fit().anova_table
    effects = {}
    for name, within, sm_name, contrasts in [
        ("A", "A", "A", A_LEVELS - 1),
        ("B", "B", "B", B_LEVELS - 1),
        ("A:B", ["A", "B"], "A:B", (A_LEVELS - 1) * (B_LEVELS - 1)),
    ]:
        row = aov.iloc[["A", "B", "A:B"].index(name)]
        _, w, chi_sq, dof, p_variant = pg.sphericity(df, dv="y", within=within, subject="subject")
        gg = pg.epsilon(df, dv="y", within=within, subject="subject", correction="gg")
        hf = pg.epsilon(df, dv="y", within=within, subject="subject", correction="hf")
        lb = pg.epsilon(df, dv="y", within=within, subject="subject", correction="lb")
        f_value, df1, df2 = float(row["F"]), float(row["ddof1"]), float(row["ddof2"])
        effects[name] = {
            "contrasts": contrasts,
            "ss [pingouin rm_anova]": float(row["SS"]),
            "df [pingouin rm_anova]": [int(df1), int(df2)],
            "f [pingouin rm_anova]": f_value,
            "p [pingouin rm_anova]": float(row["p_unc"]),
            "f [statsmodels AnovaRM]": float(sm.loc[sm_name, "F Value"]),
            "p [statsmodels AnovaRM]": float(sm.loc[sm_name, "Pr > F"]),
            "p_gg [pingouin rm_anova]": float(row["p_GG_corr"]),
            "eps_gg [pingouin rm_anova]": float(row["eps"]),
            "eps_gg [pingouin epsilon]": float(gg),
            # pingouin caps HF at 1; with one group its n - 1 equals Lecoutre's nu.
            "eps_hf_capped [pingouin epsilon]": float(hf),
            "eps_lb [pingouin epsilon]": float(lb),
            "p_hf [scipy f.sf with pingouin's capped HF epsilon]": float(
                st.f.sf(f_value, hf * df1, hf * df2)
            ),
            "p_lb [scipy f.sf with pingouin's lower bound]": float(
                st.f.sf(f_value, lb * df1, lb * df2)
            ),
            "mauchly_w [pingouin sphericity]": float(w),
            "chi_sq [pingouin sphericity]": float(chi_sq),
            "chi_df [pingouin sphericity]": int(dof),
            "p_first_order [scipy chi2.sf on pingouin's chi_sq]": float(st.chi2.sf(chi_sq, dof)),
            "p_second_order [Anderson formula in this script on pingouin's chi_sq]":
                anderson_second_order(float(chi_sq), contrasts, n - 1),
            # Not comparable for contrasts >= 3: uses 3k (k = conditions) in omega.
            "p_variant [pingouin sphericity]": float(p_variant),
        }
    return effects


def with_groups(subjects):
    """Between factor group (3, unequal sizes); within B at A's first level."""
    df = long_frame(subjects, occasions_of_a=[0])
    aov = pg.mixed_anova(data=df, dv="y", within="B", between="group", subject="subject")
    rows = {r["Source"]: r for _, r in aov.iterrows()}
    out = {}
    for name in ["group", "B", "Interaction"]:
        r = rows[name]
        out[name] = {
            "ss [pingouin mixed_anova]": float(r["SS"]),
            "df [pingouin mixed_anova]": [int(r["DF1"]), int(r["DF2"])],
            "f [pingouin mixed_anova]": float(r["F"]),
            "p [pingouin mixed_anova]": float(r["p_unc"]),
        }
        if name != "group":
            out[name]["p_gg [pingouin mixed_anova]"] = float(r["p_GG_corr"])
            out[name]["eps_gg [pingouin mixed_anova]"] = float(r["eps"])
    b = rows["B"]
    out["B"]["mauchly_w [pingouin mixed_anova]"] = float(b["W_spher"])
    return out


def main():
    subjects = invented_data()
    result = {
        "about": "INVENTED data (seeded numpy generator, rounded to 2 decimals); "
        "values from the libraries named in each key",
        "versions": {
            "pingouin": pg.__version__,
            "statsmodels": statsmodels.__version__,
            "scipy": scipy.__version__,
            "numpy": np.__version__,
            "pandas": pd.__version__,
        },
        "within_levels": [A_LEVELS, B_LEVELS],
        "occasion_order": "A slowest: index = a * 4 + b",
        "subjects": subjects,
        "two_within": two_within(subjects),
        "with_groups_first_a_level": with_groups(subjects),
    }
    out = pathlib.Path(__file__).with_suffix(".json")
    out.write_text(json.dumps(result, indent=1) + "\n")
    print(json.dumps(result["two_within"], indent=1))
    print(json.dumps(result["with_groups_first_a_level"], indent=1))


if __name__ == "__main__":
    main()
