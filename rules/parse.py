"""parse/*: what the parsers saw while reading a deck, as findings.

Parsers record :class:`linter.model.Issue` objects with a ``code``; each code has one
rule here that reports them (rules read only the neutral model). The engine itself
emits the file-level ones (path not found, unreadable, binary, not a deck).
"""
from linter.registry import engine_rule, rule

CCX = "CalculiX CrunchiX User's Manual (input deck format); ccx source, readinput.c / splitline.f"

#: code -> (severity, title, rationale, references)
ISSUE_RULES = {
    "malformed-data": ("error", "A data line cannot be read",
                       "A material, section or other checked data line holds a field that is not a number "
                       "where one is required, or too few values. The solver stops on it or reads something "
                       "else; the line is skipped and parsing continues.", (CCX,)),
    "missing-include": ("error", "An included file does not exist",
                        "The solver stops when an include is missing; everything defined in it (materials, "
                        "sets) is also missing from this check, which is marked incomplete. Findings that follow "
                        "only from the missing file are not repeated; when no element is left, the finding lists "
                        "the checks that could not run.",
                        ("CalculiX CrunchiX User's Manual *INCLUDE; NASTRAN-95 User's Manual and MYSTRAN source "
                         "LOADB.f90, INCLUDE",)),
    "include-refused": ("error", "An include leaves the include root",
                        "An include that resolves outside the include root (the configuration's folder, the "
                        "git work tree, or the common folder of the paths given) is refused, so that a "
                        "third-party deck cannot make the tool read arbitrary files. The check is incomplete.",
                        ()),
    "include-cycle": ("error", "Includes form a cycle",
                      "A file includes itself directly or through other files; the solver would loop or stop.",
                      ()),
    "include-too-deep": ("error", "Includes are nested too deeply",
                         "Nesting beyond the configured depth is refused (ccx itself stops beyond 9 levels).",
                         ("ccx source, includefilename.f / readinput.c",)),
    "include-directory": ("error", "An include names a directory", "The include names a folder, not a file.", ()),
    "include-unreadable": ("error", "An included file cannot be read",
                           "The included file exists but cannot be read (permissions, binary, too large).", ()),
    "number-truncated": ("error", "A number is longer than the solver reads",
                         "CalculiX reads reals with (f20.0) from the first 20 characters of a field: a longer "
                         "number such as 2.100000000000000000E+05 is silently read as 2.1.",
                         ("ccx source, elastics.f (read with f20.0)",)),
    "keyword-continuation": ("warning", "A keyword line ends with a comma",
                             "Other keyword dialects continue a keyword line that ends with a comma; CalculiX "
                             "does not, and reads the next line as data.",
                             ("ccx source, readinput.c (no join logic)",)),
    "unknown-option": ("warning", "An option value the solver replaces by its default",
                       "An unrecognised parameter value is silently replaced by the default (e.g. an unknown "
                       "*ELASTIC TYPE is read as isotropic, N= before the model name is applied to the "
                       "default model).", ("ccx source, elastics.f / hyperelastics.f",)),
    "unknown-keyword": ("warning", "A keyword the solver does not know",
                        "CalculiX skips a keyword it cannot interpret, with its data lines, and only warns: a "
                        "misspelt *DENSITY leaves the material without density. The finding names the nearest "
                        "keyword the solver knows.",
                        ("ccx 2.20 source, calinput.f ('card image cannot be interpreted'); " + CCX,)),
    "unknown-element-type": ("error", "An element type the dialect does not define",
                             "The solver refuses unknown element types (e.g. hybrid ...H names in CalculiX).",
                             ("ccx source, elements.f",)),
    "empty-field": ("warning", "An empty field is read as zero",
                    "An empty field between commas is read as 0 by the solver; where it is a material "
                    "constant (e.g. '210000.,,' gives nu = 0) that is rarely intended.",
                    ("ccx source, splitline.f",)),
    "value-not-finite": ("error", "A value is not a finite number",
                         "NaN, infinity or an overflowing exponent (1e400) cannot be a material constant.", ()),
    "too-many-fields": ("error", "A data line has more fields than the solver reads",
                        "CalculiX accepts at most 16 comma-separated entries on a line.",
                        ("ccx source, splitline.f",)),
    "data-without-keyword": ("warning", "Data lines before any keyword",
                             "Lines that are neither comments nor keywords appear before the first keyword "
                             "(or after an unknown one); the solver ignores or misreads them.", ()),
    "misplaced-card": ("error", "A card outside the block it belongs to",
                       "A material property card (e.g. *ELASTIC) appears outside a *MATERIAL block, or a "
                       "card appears where the solver does not accept it.", (CCX,)),
    "truncated": ("error", "The file ends in the middle of a card",
                  "The last card is incomplete (missing data lines or continuation): the file may have been "
                  "cut short.", ()),
    "no-bulk-section": ("warning", "No bulk-data section found",
                        "A bulk deck without BEGIN BULK (or ENDDATA) is incomplete for most solvers.", ()),
    "encoding": ("note", "The file is not UTF-8",
                 "The file was read as latin-1 (or UTF-16); names with non-ASCII characters may differ from "
                 "what another tool shows.", ()),
    "duplicate-set": ("note", "A set is defined more than once",
                      "Reopening a set adds to it (CalculiX); a repeated definition is often a copy-paste "
                      "left-over.", ("CCX-UM *ELSET",)),
    "xml-refused": ("error", "XML that is unsafe to read was refused",
                    "An XML model that declares entities (an entity-expansion 'billion laughs' bomb), refers to "
                    "external entities or documents, or nests elements beyond any real model is not read: "
                    "deckwarden never expands entities nor fetches anything. The file was not checked.",
                    ("defusedxml documentation (entity expansion, external entities)",)),
    "xml-malformed": ("error", "The XML is not well-formed",
                      "The file is not well-formed XML (an unclosed or mismatched tag, a bad character); the "
                      "solver refuses it too. The file was not checked.", ("W3C XML 1.0, well-formedness",)),
    "xml-unavailable": ("error", "XML support is not installed",
                        "Reading XML models needs the defusedxml package (installed with deckwarden); without "
                        "it the file is not read rather than read unsafely.", ()),
    "unsupported-version": ("error", "A model version the parser does not read",
                            "FEBio models are read for febio_spec 4.0, 3.0 and 2.5; another version (or another "
                            "root element) is not read, rather than read wrongly. The file was not checked.",
                            ("FEBio User's Manual 4.0, 3.1 'febio_spec'",)),
    "syntax-error": ("error", "A command file is not valid Python",
                     "A code_aster command file is a Python program: a syntax error stops the solver before the "
                     "first command. The line is skipped and the rest of the file is still read as data.",
                     ("code_aster user manual U1.03.01 (the command file is Python)",)),
    "code-not-run": ("warning", "A command file holds code that deckwarden does not run",
                     "deckwarden reads command files as data and never imports, executes or evaluates them. A "
                     "call to a Python function (open, __import__, a user function) is not followed, so what it "
                     "computes is not checked; in a file of unknown origin it may also be unsafe to run.",
                     ("common practice",)),
    "evaluation-limit": ("warning", "A command file expression is beyond the reader's limits",
                         "A number, sequence or nesting beyond the limits of the data reader (huge powers, "
                         "very deep nesting, very long literals) is not computed; the values that depend on it are "
                         "listed as unchecked.", ("common practice",)),
    "paired-mesh": ("note", "A command file checked with the mesh of the same base name",
                    "Without a run profile (.export) the logical units of LIRE_MAILLAGE are not known: the mesh "
                    "named like the command file is used for unit 20, the solver's default unit.",
                    ("code_aster LIRE_MAILLAGE: UNITE defaults to 20",)),
    "empty-file": ("warning", "The file holds no deck data", "The file is empty or holds only comments.", ()),
}


def _with_consequences(model, message: str, data: dict) -> tuple[str, dict]:
    """A missing include, with what it takes from the check: with no element left in the model, the
    checks that work on elements (and on which material the elements use) did not run."""
    from linter import registry

    missing = [inc for inc in model.includes if inc.status == "missing"]
    if any(b.count for b in model.element_blocks) or not missing or missing[0].path != data.get("include"):
        return message + "; what it defines is missing from this check (the check is incomplete)", data
    not_run = sorted(r.id for r in registry.all_rules() if r.family == "element") + [
        "analysis/* and units/* per material in use (no element uses a material)"]
    return (message + f"; with {len(missing)} include(s) missing the model has no elements, so the checks that need "
            f"them did not run: {', '.join(not_run)}; the check is incomplete",
            {**data, "elements": 0, "checks_not_run": not_run})


#: the codes whose issues may carry another level than the rule's
ESCALATION = {"malformed-data": "warning for values after the temperature that the solver does not read"}


#: issues that mean part of the input was not read: the check is incomplete (exit code 2)
INCOMPLETE_ISSUES = ("include-refused", "include-unreadable", "missing-include", "xml-refused", "xml-malformed",
                     "xml-unavailable", "unsupported-version")


def _make(code, severity, title, rationale, refs):
    @rule(f"parse/{code}", severity=severity, title=title, rationale=rationale, references=refs,
          data="as recorded by the parser (e.g. field, value, read_as)", incomplete=code in INCOMPLETE_ISSUES,
          escalation=ESCALATION.get(code, ""))
    def _issue_rule(model, ctx, _code=code):
        for iss in model.issues:
            if iss.code == _code:
                sev = iss.data.get("severity") if isinstance(iss.data, dict) else None
                data = {k: v for k, v in iss.data.items() if k != "severity"}
                if "include" in _code:
                    defect = ("include", iss.data.get("include"))
                elif _code == "empty-field":
                    defect = ("empty-field", iss.loc.path, iss.loc.line)
                else:
                    defect = None
                message = iss.message
                if _code == "missing-include":
                    message, data = _with_consequences(model, message, data)
                yield ctx.finding(message, iss.loc, material=iss.material, data=data, severity=sev,
                                  defect=defect)

    _issue_rule.__name__ = "parse_" + code.replace("-", "_")
    return _issue_rule


for _code, (_sev, _title, _why, _refs) in ISSUE_RULES.items():
    _make(_code, _sev, _title, _why, _refs)

engine_rule("parse/path-not-found", severity="error", title="A path given does not exist",
            rationale="The check is incomplete: a named file or folder does not exist (exit code 2).", incomplete=True)
engine_rule("parse/file-unreadable", severity="error", title="A file cannot be read",
            rationale="Permissions, a broken link or an I/O error: the file was not checked (exit code 2).",
            incomplete=True)
engine_rule("parse/binary-file", severity="error", title="A file is binary, not a text deck",
            rationale="The file holds NUL bytes or control characters; it was not checked (exit code 2).",
            incomplete=True)
engine_rule("parse/file-too-large", severity="error", title="A file is over the size limit",
            rationale="Files over max_file_size_mb are not read, so that a hostile deck cannot exhaust memory.",
            incomplete=True)
engine_rule("parse/not-a-deck", severity="error", title="A file given is not a deck of a known format",
            rationale="A file named explicitly on the command line does not look like any supported format.",
            incomplete=True)
engine_rule("parse/no-deck-found", severity="error", title="No deck was found",
            rationale="The paths given hold no file of a supported format; nothing was checked (exit code 2).",
            incomplete=True)
