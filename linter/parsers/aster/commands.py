"""A code_aster command file read as data: its top-level commands, in order, with their keywords.

The file is parsed with :mod:`ast` (never imported, compiled or run). Top-level statements
``NAME = COMMAND(...)`` and ``COMMAND(...)`` become :class:`~.evaluate.Command` objects; plain
assignments bind names for later expressions. Statements the reader does not follow (loops,
conditions, functions, imports, calls to Python functions) are listed as unchecked with their
line; any command written inside them is listed too, so that nothing is silently dropped.

A file that is not valid Python (the solver would stop on it as well) is reported with the
line of the error; the offending line is then blanked and the file parsed again, a bounded
number of times, so that the rest of the study is still read.
"""
from __future__ import annotations

import ast
import warnings
from dataclasses import dataclass, field
from typing import Optional

from .evaluate import Command, Evaluator, Opaque, is_command_name

MAX_REPAIRS = 25
#: calls that would run code or touch files if the command file were executed
RISKY = {"__import__", "open", "eval", "exec", "compile", "input", "getattr", "setattr", "globals", "locals",
         "vars", "system", "popen", "remove", "unlink", "rmtree", "execfile", "breakpoint"}


@dataclass
class Note:
    """Something the reader did not follow: ``code`` is an issue code or "unchecked"."""

    code: str
    message: str
    line: int
    what: str = ""


@dataclass
class Program:
    commands: list[Command] = field(default_factory=list)
    env: dict = field(default_factory=dict)
    notes: list[Note] = field(default_factory=list)
    #: lines of DEFI_MATERIAU calls the reader did not evaluate (inside loops, functions, expressions)
    skipped_materials: list[tuple[int, str]] = field(default_factory=list)


def _parse(text: str, prog: Program) -> Optional[ast.Module]:
    lines = text.split("\n")
    for _ in range(MAX_REPAIRS + 1):
        try:
            with warnings.catch_warnings():   # invalid escapes in the file's strings are the file's business
                warnings.simplefilter("ignore")
                return ast.parse("\n".join(lines), mode="exec", type_comments=False)
        except SyntaxError as exc:
            ln = exc.lineno or 0
            detail = (exc.msg or "invalid syntax").split("\n")[0]
            prog.notes.append(Note("syntax-error", f"the command file is not valid Python 3 on line {ln}: {detail} "
                                   "(the solver stops on it; the line is skipped and the rest is read)", ln))
            if not 1 <= ln <= len(lines) or not lines[ln - 1].strip():
                break
            indent = lines[ln - 1][: len(lines[ln - 1]) - len(lines[ln - 1].lstrip())]
            lines[ln - 1] = indent + "pass"
        except (RecursionError, MemoryError):
            prog.notes.append(Note("evaluation-limit", "the command file is nested too deeply to be read as data; "
                                   "nothing in it was checked", 1))
            return None
        except ValueError as exc:  # e.g. NUL bytes
            prog.notes.append(Note("syntax-error", f"the command file cannot be read as Python ({exc})", 1))
            return None
    prog.notes.append(Note("syntax-error", "too many syntax errors: the command file was not read further", 1))
    return None


def read_program(text: str) -> Program:
    prog = Program()
    tree = _parse(text, prog)
    if tree is None:
        return prog
    ev = Evaluator(prog.env)
    try:
        for stmt in tree.body:
            _statement(stmt, ev, prog)
    except RecursionError:
        prog.notes.append(Note("evaluation-limit", "a statement is nested too deeply to be read as data", 0))
    return prog


def _statement(stmt: ast.stmt, ev: Evaluator, prog: Program) -> None:
    line = getattr(stmt, "lineno", 0)
    if isinstance(stmt, ast.Assign) and len(stmt.targets) == 1 and isinstance(stmt.targets[0], ast.Name):
        name = stmt.targets[0].id
        value = ev.value(stmt.value)
        if isinstance(value, tuple) and len(value) == 1 and isinstance(value[0], Command):
            value = value[0]   # "X = COMMAND(...)," (a trailing comma): the solver takes the one-element list
        if isinstance(value, Command):
            value.target = name
            prog.commands.append(value)
        else:
            _opaque(value, prog, name)
        _scan_inner(stmt.value, prog, top=value if isinstance(value, Command) else None)
        ev.env[name] = value
        return
    if isinstance(stmt, ast.Expr):
        value = ev.value(stmt.value)
        if isinstance(value, Command):
            prog.commands.append(value)
            _scan_inner(stmt.value, prog, top=value)
            return
        if isinstance(stmt.value, ast.Constant):    # docstrings, bare strings
            return
        _opaque(value, prog, None)
        _scan_inner(stmt.value, prog, top=None)
        return
    if isinstance(stmt, (ast.Import, ast.ImportFrom)):
        mod = stmt.module if isinstance(stmt, ast.ImportFrom) else ", ".join(a.name for a in stmt.names)
        if mod not in ("math", "code_aster.Commands", "code_aster", "Utilitai.Utmess", "numpy"):
            prog.notes.append(Note("unchecked", f"import of {mod} is not followed", line, "import"))
        return
    if isinstance(stmt, ast.Pass):
        return
    kind = {ast.For: "for loop", ast.While: "while loop", ast.If: "if block", ast.FunctionDef: "function",
            ast.ClassDef: "class", ast.With: "with block", ast.Try: "try block"}.get(type(stmt), type(stmt).__name__)
    prog.notes.append(Note("unchecked", f"a Python {kind}: the commands inside are not read", line, kind))
    for node in ast.walk(stmt):
        if isinstance(node, ast.Name) and isinstance(node.ctx, ast.Store):
            ev.env[node.id] = Opaque(f"a name bound inside a {kind} (line {line})", line)
    _scan_inner(stmt, prog, top=None, where=f"inside a {kind} (line {line})")


def _opaque(value, prog: Program, name: Optional[str]) -> None:
    """A statement whose value is not computed: listed as unchecked (risky calls are reported by _scan_inner)."""
    if isinstance(value, Opaque) and "does not run" in value.why:
        called = value.why.split("call to ", 1)[-1].split("(", 1)[0].rsplit(".", 1)[-1]
        if called not in RISKY:
            prog.notes.append(Note("unchecked", value.why + (f" (bound to {name})" if name else ""), value.line,
                                   "Python call"))
    elif isinstance(value, Opaque) and value.why.startswith(("an integer too large", "a power", "a value that",
                                                             "an expression nested", "a sequence", "a string",
                                                             "a repeated")):
        prog.notes.append(Note("evaluation-limit", f"{value.why} on line {value.line}: not computed"
                               + (f"; {name} is not checked" if name else ""), value.line))


def _scan_inner(node: ast.AST, prog: Program, top: Optional[Command], where: str = "") -> None:
    """Record risky calls and DEFI_MATERIAU calls that are not the evaluated command itself."""
    for sub in ast.walk(node):
        if not isinstance(sub, ast.Call):
            continue
        func = sub.func
        name = func.id if isinstance(func, ast.Name) else func.attr if isinstance(func, ast.Attribute) else ""
        if name in RISKY:
            prog.notes.append(Note("code-not-run", f"a call to {name}() on line {sub.lineno}: deckwarden reads the "
                                   "command file as data and never runs it", sub.lineno, "call"))
        if name == "DEFI_MATERIAU" and (top is None or top.name != "DEFI_MATERIAU" or sub.lineno != top.line
                                        or where):
            prog.skipped_materials.append((sub.lineno, where or "inside an expression the reader does not follow"))
        elif is_command_name(name) and where and name in ("AFFE_MATERIAU", "AFFE_MODELE", "STAT_NON_LINE",
                                                            "MECA_STATIQUE", "DYNA_NON_LINE", "CALC_MODES"):
            prog.notes.append(Note("unchecked", f"{name} {where} is not read", sub.lineno, name))
