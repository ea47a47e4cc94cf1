"""The CI-gate steps of ``deckwarden check`` around the check itself: the paths of ``--files-from``,
fingerprints, the baseline (compare or write), and the SARIF run id."""
from __future__ import annotations

import os
import sys
from typing import Optional

#: report formats that always carry fingerprints (JSON carries them when a baseline is compared or written;
#: the offending lines come from the text the parser kept, ``FileReport.line_texts``, where it keeps one)
FINGERPRINTED = ("sarif",)


class GateError(ValueError):
    """A usage problem (exit code 2)."""


def files_from(source: str) -> list[str]:
    """The paths listed one per line in ``source`` (``-``: standard input); blank lines and ``#`` comments skipped."""
    try:
        if source == "-":
            text = sys.stdin.read()
        else:
            with open(source, encoding="utf-8", errors="surrogateescape") as fh:
                text = fh.read()
    except OSError as exc:
        raise GateError(f"--files-from {source}: cannot read the file ({exc.strerror or exc})") from None
    out = []
    for line in text.splitlines():
        item = line.strip()
        if item and not item.startswith("#"):
            out.append(item)
    return out


def paths_of(args, config) -> list[str]:
    """The command-line paths followed by those of ``--files-from`` (excluded globs left out of the list)."""
    paths = list(args.paths)
    if getattr(args, "files_from", None):
        listed = files_from(args.files_from)
        paths += [p for p in listed if not config.excluded(p)]
        if not paths:
            raise GateError(f"--files-from {args.files_from}: lists no path")
    if getattr(args, "only_decks", False):
        return hook_paths(paths, config)          # may be empty: nothing to check
    if not paths:
        raise GateError("no path to check: give PATH arguments or --files-from FILE")
    return paths


def automation_id(args, paths: list[str]) -> str:
    """``deckwarden/<category>/``: the category given, else one derived from the paths checked, so that
    the runs of several shards differ and each upload replaces only its own earlier run."""
    cat = getattr(args, "sarif_category", None)
    if not cat:
        import hashlib  # imported here: only SARIF runs need it, and it costs start-up time

        digest = hashlib.sha256("\n".join(sorted(paths)).encode("utf-8", "surrogateescape")).hexdigest()[:12]
        cat = f"paths-{digest}"
    return f"deckwarden/{cat}/"


def after_check(result, args, paths: list[str], fmt: str) -> Optional[str]:
    """Fingerprint, compare with or write the baseline; return the fingerprint root (or None)."""
    base, write = getattr(args, "baseline", None), getattr(args, "write_baseline", None)
    if not (base or write or fmt in FINGERPRINTED):
        return None
    from . import baseline as bl  # only when fingerprints are wanted: a plain check skips the import
    roots, texts = bl.fingerprint_run(result, paths, write or base)
    if base:
        try:
            recorded = bl.read(base)
        except bl.BaselineError as exc:
            raise GateError(str(exc)) from None
        result.fixed = bl.apply(result, recorded)
    if write:
        try:
            n = bl.write(write, result, roots, texts)
        except OSError as exc:
            raise GateError(f"--write-baseline {write}: cannot write ({exc.strerror or exc})") from None
        for f in result.findings:
            if f.suppression is None:
                f.baseline = True
        result.fixed = []
        print(f"deckwarden: wrote {n} finding(s) to the baseline {write}", file=sys.stderr)
    return _common(roots)


def _common(roots: list[str]) -> Optional[str]:
    if not roots:
        return None
    if len(roots) == 1:
        return roots[0]
    try:
        return os.path.commonpath(roots)
    except ValueError:
        return None


def hook_paths(paths: list[str], config) -> list[str]:
    """``--only-decks``: the files given (by a pre-commit hook, say) treated like files of a folder walk.

    A file that is not a deck of a known format (another YAML file, a solver's result ``.dat``) is left out
    silently; an ``exclude`` glob leaves it out too. A file that other decks include (an include-only
    fragment) is not checked alone: the decks under the include root that include it, directly or through
    other includes, are checked instead.
    """
    from . import parsers
    from .discovery import _head, _includes_task, _walk, make_policy
    from .findings import RunResult

    exts = parsers.all_extensions()

    def deck_format(p: str) -> Optional[str]:
        if os.path.splitext(p)[1].lower() not in exts or config.excluded(p):
            return None
        try:
            return parsers.detect(p, _head(p))
        except OSError:
            return None

    given = [(p, fmt) for p in paths if os.path.isfile(p) for fmt in [deck_format(p)] if fmt]
    if not given:
        return []
    policy = make_policy([p for p, _f in given], config)
    root = policy.root or os.path.commonpath([os.path.dirname(os.path.abspath(p)) for p, _f in given])
    includers: dict[str, list[str]] = {}
    for f in _walk(root, RunResult()):
        fmt = deck_format(f)
        if fmt:
            for inc in _includes_task((f, fmt, config, policy)):
                includers.setdefault(inc, []).append(f)
    out: set[str] = set()
    for p, _fmt in given:
        todo, seen = [os.path.realpath(p)], set()
        while todo:
            real = todo.pop()
            if real in seen:
                continue
            seen.add(real)
            if real in includers:
                todo.extend(os.path.realpath(x) for x in includers[real])
            elif real == os.path.realpath(p):
                out.add(p)
            else:
                out.add(os.path.relpath(real) if not os.path.isabs(p) else real)
    return sorted(out)
