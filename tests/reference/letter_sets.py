"""Compact letter display for the linear-extensions reference scripts
(ancova.py, traits.py), written here from the definition rather than taken
from a library: each letter marks a maximal set of means with no pair
declared different; sets are lettered in the order of their highest mean
(highest mean "a"). Brute force over subsets, so only for a handful of means.
"""
import itertools


def letters(names, means, differ):
    """`differ(i, j)` is True when means i and j were declared different."""
    order = sorted(range(len(names)), key=lambda i: -means[i])
    sets = []
    for size in range(len(order), 0, -1):
        for combo in itertools.combinations(order, size):
            if any(differ(i, j) for i, j in itertools.combinations(combo, 2)):
                continue
            if not any(set(combo) <= s for s in sets):
                sets.append(set(combo))
    sets.sort(key=lambda s: min(order.index(i) for i in s))
    marks = {names[i]: "" for i in order}
    for letter, members in zip("abcdefghijklmnopqrstuvwxyz", sets):
        for i in order:
            if i in members:
                marks[names[i]] += letter
    return {"order_by_mean": [names[i] for i in order], "letters": marks}
