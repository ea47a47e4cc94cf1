"""The ``deckwarden`` command: ``check``, ``audit``, ``rules``, ``explain``, ``--version``.

Exit codes: 0 nothing at or above the fail level; 1 findings at or above it; 2 the check
is incomplete (missing path, unreadable file, no deck, internal failure) or a usage
error. Importing this module stays light (argparse only): the engine, numpy and rich
load when a command runs.
"""
from __future__ import annotations

import argparse
import os
import sys
from typing import Optional, Sequence

from . import __version__

FORMATS = ("text", "json", "sarif", "audit", "line", "markdown")
LEVELS = ("error", "warning", "note")
EXIT_USAGE = 2


class UsageError(Exception):
    """A problem with the command line or the configuration: message, exit code 2."""


class _Parser(argparse.ArgumentParser):
    def error(self, message):  # argparse's own exit code is 2 as well; keep one message format
        self.print_usage(sys.stderr)
        raise UsageError(message)


def build_parser() -> argparse.ArgumentParser:
    p = _Parser(prog="deckwarden",
                description="Check the materials of finite-element input decks before the solve.")
    p.add_argument("--version", action="version", version=f"deckwarden {__version__}")
    sub = p.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)

    c = sub.add_parser("check", help="check decks (files or folders)",
                       description="Check decks and report findings. Exit code 0: nothing at or above the "
                                   "fail level; 1: findings at or above it; 2: the check is incomplete.")
    c.add_argument("paths", nargs="*", metavar="PATH", help="deck files or folders to walk")
    c.add_argument("--files-from", metavar="FILE|-",
                   help="also check the paths listed in FILE, one per line ('-': standard input), e.g. one shard")
    c.add_argument("--only-decks", action="store_true",
                   help="treat the files given like files of a folder walk (for a pre-commit hook): files that "
                        "are not decks are skipped, an include-only fragment is checked through the decks that "
                        "include it")
    c.add_argument("--baseline", metavar="FILE",
                   help="report only findings not recorded in this baseline; recorded ones are counted apart and "
                        "entries no finding matches are reported as fixed")
    c.add_argument("--write-baseline", metavar="FILE",
                   help="record the current findings (not those suppressed by comments) in FILE")
    c.add_argument("--sarif-category", metavar="NAME",
                   help="SARIF automationDetails.id is deckwarden/NAME/ (default: derived from the paths checked)")
    c.add_argument("--format", "-f", choices=FORMATS, default="text",
                   help="report format (default: text; audit: the reviewer's audit in Markdown, or in HTML "
                        "when --output ends with .html; markdown: a short summary for a merge-request comment)")
    c.add_argument("--output", "-o", metavar="FILE", help="write the report to FILE instead of standard output")
    _config_options(c)
    c.add_argument("--materials", metavar="FILE",
                   help="material file (deckwarden: 1) for the mesh files given (Gmsh, VTK, XDMF, MED ...)")
    c.add_argument("--no-inline-suppressions", action="store_true",
                   help="ignore every suppression comment in the decks (to see what a supplier silenced)")
    c.add_argument("--no-color", action="store_true", help="no colour in the text report")

    a = sub.add_parser("audit", help="the reviewer's audit of decks: one self-contained HTML file",
                       description="Check decks and write the reviewer's audit: one HTML file with the model, "
                                   "every material's constants and derived values (deck units and SI), the usage "
                                   "map, findings with rationale and remedy, suppressed findings and figures "
                                   "(figures need the optional matplotlib extra). Exit codes as for check.")
    a.add_argument("--format", "-f", choices=("html", "markdown"), default="html",
                   help="html (default) or markdown")
    for action in c._actions:  # every other option of check, as check has it
        if action.dest not in ("help", "format"):
            a._add_action(action)

    g = sub.add_parser("config", help="show the effective configuration and where each value comes from",
                       description="Print the configuration a check of PATH would use: every value and its "
                                   "origin (default, file and key, command-line option).")
    g.add_argument("paths", nargs="*", metavar="PATH", help="where the check would start (default: .)")
    _config_options(g)
    g.add_argument("--format", "-f", choices=("text", "json"), default="text")

    r = sub.add_parser("rules", help="list the rules", description="List every registered rule.")
    r.add_argument("--format", "-f", choices=("text", "markdown", "json"), default="text")

    e = sub.add_parser("explain", help="what a rule checks and why",
                       description="Show a rule's title, default severity, rationale, references and data.")
    e.add_argument("rule", metavar="RULE", help="a rule id (family/name) or a family")
    e.add_argument("--config", metavar="FILE",
                   help="configuration whose threshold values to show (default: deckwarden.yaml found upwards)")
    return p


class _LazyHelp(str):
    """A help text computed only when the help is shown (the lists come from data files)."""

    def __new__(cls, fn):
        obj = super().__new__(cls, "(computed)")
        obj.fn = fn
        return obj

    def __mod__(self, params):
        return self.fn() % params


def _units_help() -> str:
    from .configfile import unit_systems_text

    return "declare the unit system instead of inferring it: " + unit_systems_text().replace("%", "%%")


def _dialect_help() -> str:
    from .configfile import listing

    return ("solver dialect for every format that has it, or for one format (repeatable); "
            + listing().replace("%", "%%"))


def _config_options(c) -> None:
    """The options that change the configuration (shared by ``check`` and ``config``)."""
    c.add_argument("--fail-on", choices=LEVELS, help="lowest severity that makes the exit code 1 (default: error)")
    c.add_argument("--config", metavar="FILE",
                   help="configuration file: deckwarden.yaml or a pyproject.toml with [tool.deckwarden] "
                        "(default: the nearest one from the first path upwards)")
    c.add_argument("--dialect", action="append", default=[], metavar="NAME|FORMAT=NAME",
                   help=_LazyHelp(_dialect_help))
    c.add_argument("--solver-cwd", metavar="DIR", help="resolve keyword includes from this run folder")
    c.add_argument("--include-root", metavar="DIR", help="includes may not resolve outside this folder")
    c.add_argument("--allow-include-outside", action="store_true", help="allow includes anywhere")
    c.add_argument("--units", metavar="SYSTEM", help=_LazyHelp(_units_help))
    c.add_argument("--select", action="append", default=[], metavar="ID|FAMILY",
                   help="run only these rules or families (repeatable, or comma-separated)")
    c.add_argument("--ignore", action="append", default=[], metavar="ID|FAMILY",
                   help="skip these rules or families (repeatable, or comma-separated)")
    c.add_argument("--jobs", "-j", type=_positive_int, metavar="N",
                   help="check files in N processes; one large deck may use a second process for its node table "
                        "(default: the processors this process may use; 1: one process)")


def _positive_int(text: str) -> int:
    try:
        n = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"not a whole number: {text!r}") from None
    if n < 1:
        raise argparse.ArgumentTypeError("must be 1 or more")
    return n


def _split(items: Sequence[str]) -> list[str]:
    return [part.strip() for item in items for part in item.split(",") if part.strip()]


# --------------------------------------------------------------------------- check


def _config(args):
    from .config import Config, ConfigError
    from .configfile import check_dialect, check_units

    paths = list(args.paths) or ["."]
    try:
        cfg = Config.load(args.config, start=paths[0] if os.path.exists(paths[0]) else None)
    except ConfigError as exc:
        raise UsageError(str(exc)) from None
    origins = cfg.origins
    if args.config:
        origins["(file)"] = f"--config {args.config}"
    if args.fail_on:
        cfg.fail_on = args.fail_on
        origins["fail_on"] = "--fail-on"

    def bad(prefix):
        def fail(*rest):
            raise UsageError(f"{prefix}: {rest[-1]}")
        return fail

    for item in args.dialect:
        if "=" in item:
            fmt, _, name = item.partition("=")
            if not fmt.strip() or not name.strip():
                raise UsageError(f"--dialect {item!r}: expected NAME or FORMAT=NAME")
            check_dialect({fmt.strip().lower(): name.strip()}, bad(f"--dialect {item!r}"))
            cfg.dialects[fmt.strip().lower()] = name.strip().lower()
        elif item.strip():
            from .configfile import dialects_by_format

            check_dialect(item.strip(), bad(f"--dialect {item!r}"))
            name = item.strip().lower()
            cfg.dialects.update({f: name for f, ds in dialects_by_format().items() if name in ds})
        else:
            raise UsageError("--dialect: empty name")
        origins["dialect"] = "--dialect"
    for opt, attr in (("solver_cwd", "solver_cwd"), ("include_root", "include_root")):
        value = getattr(args, opt)
        if value is not None:
            if not os.path.isdir(value):
                raise UsageError(f"--{opt.replace('_', '-')} {value}: not a folder")
            setattr(cfg, attr, os.path.abspath(value))
            origins[attr] = f"--{opt.replace('_', '-')}"
    if args.allow_include_outside:
        cfg.allow_include_outside = True
        origins["allow_include_outside"] = "--allow-include-outside"
    if args.units:
        check_units(args.units, bad(f"--units {args.units!r}"))
        cfg.units = args.units
        origins["units"] = "--units"
    if getattr(args, "materials", None):
        if not os.path.isfile(args.materials):
            raise UsageError(f"--materials {args.materials}: not a file")
        folders = [p for p in args.paths if os.path.isdir(p)]
        if folders:
            raise UsageError(f"--materials takes mesh files, not folders ({folders[0]})")
        cfg.materials = args.materials
    select, ignore = _split(args.select), _split(args.ignore)
    _check_rule_names(select + ignore)
    if select:
        cfg.select = select
        origins["select"] = "--select"
    if ignore:
        cfg.ignore = list(cfg.ignore) + ignore
        origins["ignore"] = "--ignore" + (" (added to the file's list)" if "ignore" in origins else "")
    if args.jobs:
        cfg.jobs = args.jobs
        origins["jobs"] = "--jobs"
    elif "jobs" not in origins:
        cfg.jobs = available_cpus()
        origins["jobs"] = "default (the processors this process may use)"
    return cfg


def available_cpus() -> int:
    """The processors this process may run on (not the machine's count)."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except (AttributeError, OSError):  # not Linux
        return max(1, os.cpu_count() or 1)


def _check_rule_names(names: list[str]) -> None:
    if not names:
        return
    from . import registry

    ids = set(registry.load())
    known = ids | {i.split("/", 1)[0] for i in ids} | set(registry.FAMILIES)
    for n in names:
        if n not in known:
            raise UsageError(f"unknown rule or family {n!r}{_suggest(n, known)}")


def _suggest(name: str, known) -> str:
    from .configfile import closest

    return closest(name, known)


def _inputs(result) -> set[str]:
    out = set()
    for fr in result.files:
        out.add(os.path.realpath(fr.path))
        summ = fr.summary if isinstance(fr.summary, dict) else {}
        out.update(os.path.realpath(str(f)) for f in summ.get("files_read") or ())
    return out


def _report_format(args) -> str:
    """The reporter's name: ``audit --format html|markdown``; ``check --format audit`` writes Markdown,
    or HTML when the output file is named .html/.htm."""
    if args.command == "audit":
        return "html" if args.format == "html" else "audit"
    if args.format == "audit" and args.output and args.output.lower().endswith((".html", ".htm")):
        return "html"
    return args.format


def cmd_check(args) -> int:
    from . import reporters
    from .check import check_paths
    from .findings import exit_code

    cfg = _config(args)
    if args.no_inline_suppressions:
        cfg.inline_suppressions = False
    if args.output and os.path.realpath(args.output) in {os.path.realpath(p) for p in args.paths}:
        raise UsageError(f"--output {args.output}: is one of the paths to check; deckwarden never writes its input")
    fmt = _report_format(args)
    audit = fmt in ("audit", "html")
    from . import gate

    try:
        paths = gate.paths_of(args, cfg)
        if not paths:                    # --only-decks and none of the files is a deck
            return 0
        for extra in (args.baseline, args.write_baseline):
            if extra and os.path.realpath(extra) in {os.path.realpath(p) for p in paths}:
                raise gate.GateError(f"{extra}: is one of the paths to check")
        from .progress import for_terminal

        result = check_paths(paths, cfg, jobs=cfg.jobs, details=audit,
                             progress=for_terminal(sys.stderr, no_color=bool(args.no_color)))
        srcroot = gate.after_check(result, args, paths, fmt)
    except gate.GateError as exc:
        raise UsageError(str(exc)) from None
    code = exit_code(result, cfg.fail_on)
    opts = reporters.ReportOptions(color=False if (args.no_color or args.output) else None,
                                   fail_on=cfg.fail_on, exit_code=code, srcroot=srcroot,
                                   automation_id=gate.automation_id(args, paths),
                                   baseline=bool(args.baseline or args.write_baseline))
    if audit:
        import dataclasses

        opts.command = ["deckwarden"] + list(getattr(args, "argv", None) or sys.argv[1:])
        opts.config = dataclasses.asdict(cfg)
    fn = reporters.get(fmt)
    if args.output:
        if os.path.realpath(args.output) in _inputs(result):
            raise UsageError(f"--output {args.output}: is a file the check read; deckwarden never writes its input")
        try:
            with open(args.output, "w", encoding="utf-8", newline="\n") as fh:
                fn(result, fh, opts)
        except OSError as exc:
            print(f"deckwarden: cannot write {args.output}: {exc.strerror or exc}", file=sys.stderr)
            return 2
    else:
        try:
            fn(result, sys.stdout, opts)
            sys.stdout.flush()
        except BrokenPipeError:  # the reader went away (| head): the exit code still tells the outcome
            try:
                sys.stdout = open(os.devnull, "w")
            except OSError:  # pragma: no cover
                pass
    return code


# --------------------------------------------------------------------------- entry


def main(argv: Optional[Sequence[str]] = None) -> int:
    try:
        if hasattr(sys.stdout, "reconfigure"):
            sys.stdout.reconfigure(errors="backslashreplace")
    except (ValueError, OSError):  # pragma: no cover - a closed or odd stream
        pass
    try:
        argv = list(sys.argv[1:] if argv is None else argv)
        args = build_parser().parse_args(argv)
        args.argv = argv
        if args.command is None:
            build_parser().print_help(sys.stderr)
            return EXIT_USAGE
        if args.command == "config":
            from .configshow import cmd_config

            return cmd_config(args, _config(args))
        if args.command in ("rules", "explain"):
            from .cli_rules import cmd_explain, cmd_rules

            return (cmd_rules if args.command == "rules" else cmd_explain)(args)
        return cmd_check(args)
    except UsageError as exc:
        print(f"deckwarden: error: {exc}", file=sys.stderr)
        return EXIT_USAGE
    except SystemExit as exc:  # --version, --help
        return exc.code if isinstance(exc.code, int) else (0 if exc.code is None else EXIT_USAGE)
    except KeyboardInterrupt:
        print("deckwarden: interrupted", file=sys.stderr)
        return 130
    except Exception as exc:  # never a traceback
        print(f"deckwarden: internal error (please report it): {type(exc).__name__}: {exc}", file=sys.stderr)
        return 2
