"""``deckwarden config``: the effective configuration, and for every value where it came from."""
from __future__ import annotations

import json
import sys
from typing import Any

#: what is shown, in this order (configuration key -> Config attribute)
SHOWN = (("fail_on", "fail_on"), ("dialect", "dialects"), ("units", "units"), ("rules", "rules"),
         ("select", "select"), ("ignore", "ignore"), ("exclude", "exclude"), ("per_path", "per_path"),
         ("solver_cwd", "solver_cwd"), ("include_root", "include_root"),
         ("allow_include_outside", "allow_include_outside"), ("max_include_depth", "max_include_depth"),
         ("max_file_size_mb", "max_file_size_mb"), ("jobs", "jobs"))


def effective(cfg) -> dict[str, Any]:
    """{"file": ..., "values": {key: {"value", "origin"}}, "thresholds": {...overrides and origin}}."""
    values = {}
    for key, attr in SHOWN:
        values[key] = {"value": getattr(cfg, attr), "origin": cfg.origins.get(key, "default")}
    thr = cfg.origins.get("thresholds")
    return {"file": cfg.origins.get("(file)", cfg.source) or None,
            "values": values,
            "thresholds": {"origin": (f"{thr} over the defaults of linter/data/thresholds.yaml" if thr
                                      else "default (linter/data/thresholds.yaml)")}}


def _show(value: Any) -> str:
    if isinstance(value, str):
        return value
    if value is None:
        return "(none)"
    return json.dumps(value, ensure_ascii=False, sort_keys=False)


def cmd_config(args, cfg) -> int:
    from .reporters import visible

    doc = effective(cfg)
    if args.format == "json":
        sys.stdout.write(json.dumps(doc, indent=2, ensure_ascii=False) + "\n")
        return 0
    out = [f"configuration file: {visible(cfg.source) if cfg.source else '(none found; defaults)'}"]
    width = max(len(k) for k, _ in SHOWN)
    for key, entry in doc["values"].items():
        out.append(f"{key:<{width}}  {visible(_show(entry['value']))}    [{visible(entry['origin'])}]")
    out.append(f"{'thresholds':<{width}}  [{visible(doc['thresholds']['origin'])}]")
    sys.stdout.write("\n".join(out) + "\n")
    return 0
