"""Material names as unit evidence: a name that says what a material is (a steel grade, an aluminium
alloy, a rubber, concrete; the word lists are data in ``units.yaml``, section ``names``)."""
from __future__ import annotations

import functools
import re

_TOKEN = re.compile(r"[a-z0-9]+(?:[./][0-9]+)*")


@functools.lru_cache(maxsize=4096)
def name_classes(name: str) -> tuple[int, ...]:
    """Indices of the classes a material name points to (empty: the name says nothing)."""
    from .infer import load_data

    data = load_data()
    low = (name or "").lower()
    tokens = _TOKEN.findall(low) + _TOKEN.findall(low.replace("-", "").replace("_", ""))
    out = []
    for c, words in data.names.items():
        for w in words:
            if any(t == w or (len(w) >= 4 and t.startswith(w)) or
                   (t.startswith(w) and t[len(w):len(w) + 1].isdigit()) for t in tokens):
                out.append(c)
                break
    return tuple(sorted(out))
