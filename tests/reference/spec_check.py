"""Shared helpers for the linear-extensions reference scripts (ancova.py,
contrasts_trends.py, transformations.py, traits.py).

`checked(value, spec)` pairs a value computed here with the number printed in
the linear-extensions specification (copied there as text, 10 to 12
significant digits) and records their relative difference. Agreement means a
relative difference of at most 1e-9: the specification prints at least 10
significant digits, so rounding alone stays below 5e-10 relative.
"""

import numpy
import pandas
import scipy
import statsmodels

AGREE_REL = 1e-9


def checked(value, spec=None):
    """A computed value, with the specification's value beside it when it gives one."""
    value = float(value)
    if spec is None:
        return {"value": value}
    spec_value = float(spec)
    scale = max(abs(spec_value), abs(value))
    rel = 0.0 if scale == 0.0 else abs(value - spec_value) / scale
    return {
        "value": value,
        "spec_value": spec_value,
        "rel_diff": rel,
        "agrees": rel <= AGREE_REL,
    }


def checked_list(values, specs=None):
    if specs is None:
        return [checked(v) for v in values]
    assert len(values) == len(specs), (len(values), len(specs))
    return [checked(v, s) for v, s in zip(values, specs)]


def collect_disagreements(node, path="", out=None):
    """Every entry below `node` whose value disagrees with its spec value, by JSON path."""
    if out is None:
        out = []
    if isinstance(node, dict):
        if "agrees" in node and not node["agrees"]:
            out.append({"path": path, "value": node["value"], "spec_value": node["spec_value"],
                        "rel_diff": node["rel_diff"]})
        for key in sorted(node):
            collect_disagreements(node[key], f"{path}/{key}", out)
    elif isinstance(node, list):
        for i, item in enumerate(node):
            collect_disagreements(item, f"{path}/{i}", out)
    return out


def count_checks(node):
    if isinstance(node, dict):
        own = 1 if "spec_value" in node else 0
        return own + sum(count_checks(v) for v in node.values())
    if isinstance(node, list):
        return sum(count_checks(v) for v in node)
    return 0


def max_rel_diff(node):
    if isinstance(node, dict):
        own = node.get("rel_diff", 0.0)
        return max([own] + [max_rel_diff(v) for v in node.values()])
    if isinstance(node, list):
        return max([0.0] + [max_rel_diff(v) for v in node])
    return 0.0


def versions(**extra):
    out = {
        "numpy": numpy.__version__,
        "pandas": pandas.__version__,
        "scipy": scipy.__version__,
        "statsmodels": statsmodels.__version__,
    }
    out.update(extra)
    return dict(sorted(out.items()))


def summary(doc):
    """Agreement summary written at the top level of each JSON."""
    bad = collect_disagreements(doc)
    return {
        "spec_values_checked": count_checks(doc),
        "disagreements": bad,
        "max_rel_diff": max_rel_diff(doc),
        "tolerance_rel": AGREE_REL,
    }
