"""Small FEBio model texts for the tests (invented; written in the febio_spec 4.0 layout).

    text = feb(materials=MAT_NEO, domains='<SolidDomain name="Part1" mat="Rubber"/>')
    model = parse_text(tmp_path, text)             # the parser only
    report = check_text(tmp_path, text)            # parser, derivations and rules (a FileReport)
"""
from __future__ import annotations

from pathlib import Path

from linter.check import check_file, make_policy
from linter.config import Config
from linter.parsers import ParseOptions
from linter.parsers import febio as F

MAT_NEO = """<material id="1" name="Rubber" type="neo-Hookean">
\t\t\t<E>6</E>
\t\t\t<v>0.45</v>
\t\t</material>"""


def hex_nodes(nx: int = 2) -> str:
    """Nodes of an nx x 1 x 1 row of unit hexahedra."""
    lines, nid = [], 1
    for i in range(nx + 1):
        for y in (0.0, 1.0):
            for z in (0.0, 1.0):
                lines.append(f'\t\t\t<node id="{nid}">{float(i)},{y},{z}</node>')
                nid += 1
    return "\n".join(lines)


def hex_elems(nx: int = 2, first: int = 1) -> str:
    out = []
    for i in range(nx):
        a = 4 * i + 1
        c = [a, a + 4, a + 6, a + 2, a + 1, a + 5, a + 7, a + 3]
        out.append(f'\t\t\t<elem id="{first + i}">{",".join(map(str, c))}</elem>')
    return "\n".join(out)


def feb(materials: str = MAT_NEO, *, version: str = "4.0", etype: str = "hex8", part: str = "Part1",
        domains: str = '<SolidDomain name="Part1" mat="Rubber"/>', analysis: str = "STATIC",
        extra: str = "", nx: int = 2, module: str = "solid", elements: str | None = None) -> str:
    elems = elements if elements is not None else (
        f'\t\t<Elements type="{etype}" name="{part}">\n{hex_elems(nx)}\n\t\t</Elements>')
    return f"""<?xml version="1.0" encoding="ISO-8859-1"?>
<febio_spec version="{version}">
\t<Module type="{module}"/>
\t<Control>
\t\t<analysis>{analysis}</analysis>
\t\t<time_steps>10</time_steps>
\t</Control>
\t<Material>
\t\t{materials}
\t</Material>
\t<Mesh>
\t\t<Nodes name="Object1">
{hex_nodes(nx)}
\t\t</Nodes>
{elems}
\t</Mesh>
\t<MeshDomains>
\t\t{domains}
\t</MeshDomains>
{extra}
</febio_spec>
"""


def write(tmp_path: Path, text: str | bytes, name: str = "model.feb") -> Path:
    p = tmp_path / name
    p.write_bytes(text if isinstance(text, bytes) else text.encode("latin-1"))
    return p


def parse_text(tmp_path: Path, text: str | bytes, name: str = "model.feb", **opts):
    p = write(tmp_path, text, name)
    return F.parse(str(p), ParseOptions(display_path=str(p), **opts))


def check_path(p: Path, config: Config | None = None):
    cfg = config or Config()
    return check_file(str(p), "febio", cfg, make_policy([str(p)], cfg))


def check_text(tmp_path: Path, text: str | bytes, name: str = "model.feb", config: Config | None = None):
    return check_path(write(tmp_path, text, name), config)


def rules_in(report, severity: str | None = None) -> list[str]:
    return sorted(f.rule for f in report.findings if severity is None or f.severity == severity)
