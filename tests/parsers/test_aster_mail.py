"""The native code_aster mesh (.mail): sections, counts, groups, comments and header items.

Source: code_aster documentation U3.01.00 (mesh file format; document number from memory): a section per
keyword (COOR_nD, a cell type such as HEXA8, GROUP_MA, GROUP_NO), closed by FINSF, FIN at the end, '%' starts
a comment, names of 8 characters at most, NOM= names a group on the header line. The counts are compared
with a plain split of the same text (common practice).
"""
import numpy as np
import pytest

from linter.parsers.aster.mail import _names, count_tokens, read_mail

MAIL = b"""TITRE
 demo
FINSF
%  a comment line
COOR_2D   % 4 nodes
 N1 0. 0.
 N2 2. 0.
 N3 2. 1.D0
 N4 0. 1.
FINSF
QUAD4     NOM=INDEFINI  NBOBJ=1
          AUTEUR=SOMEONE  DATE=01/01/01
 M1 N1 N2
    N3 N4
FINSF
SEG2
 S1 = N1 N2
 S2 = N2 N3
FINSF
GROUP_MA NOM = EDGES
 S1 S2
FINSF
GROUP_MA
 PLATE
 m1
FINSF
GROUP_NO
 CORNER N1
FINSF
FIN
"""


def test_sections_counts_and_groups():
    m = read_mail(MAIL, "x.mail")
    assert m.issues == []
    assert m.dim == 2 and m.node_count == 4
    assert [(c.type, c.count, c.first) for c in m.cells] == [("QUAD4", 1, 0), ("SEG2", 2, 1)]
    assert sorted(m.groups) == ["EDGES", "PLATE"] and list(m.node_groups) == ["CORNER"]
    assert m.group_cells("EDGES").tolist() == [1, 2]
    assert m.group_cells("PLATE").tolist() == [0]          # names are compared in upper case
    assert m.group_cells("NONE") is None
    np.testing.assert_allclose(m.bbox[0], [0, 0, 0])
    np.testing.assert_allclose(m.bbox[1], [2, 1, 0])       # 1.D0: Fortran exponent


def test_lower_case_keywords_and_missing_finsf():
    m = read_mail(b"coor_3d\nn1 0 0 0\nn2 1 0 0\nfinsf\nseg2\ns1 n1 n2\nfin\n", "x.mail")
    assert m.node_count == 2 and [(c.type, c.count) for c in m.cells] == [("SEG2", 1)]


def test_wrong_field_count_is_reported_with_its_line():
    m = read_mail(b"COOR_3D\nN1 0 0 0\nN2 1 0\nFINSF\nFIN\n", "x.mail")
    assert [(i.code, i.line) for i in m.issues] == [("malformed-data", 1)]


def test_group_naming_unknown_cells():
    m = read_mail(b"COOR_1D\nN1 0\nN2 1\nFINSF\nSEG2\nS1 N1 N2\nFINSF\nGROUP_MA\nG S1 S9\nFINSF\nFIN\n", "x.mail")
    assert m.group_cells("G").tolist() == [0]
    assert any(i.code == "malformed-data" and "1 cell" in i.message for i in m.issues)


def test_not_a_mesh():
    m = read_mail(b"version https://example.invalid/spec/v1\noid sha256:00\n", "x.mail")
    assert [i.code for i in m.issues] == ["malformed-data"]


@pytest.mark.parametrize("text", [b"", b"A B  C\n\n D", b"  \n\t x", b"abc"])
def test_token_count_matches_split(text):
    assert count_tokens(text, 0, len(text)) == len(text.split())


def _packed_by_hand(token: bytes) -> int:
    """A name as the mesh keys it: 8 bytes at most, upper case, zero-padded, little-endian (plain Python)."""
    return int.from_bytes(token[:8].upper().ljust(8, b"\0"), "little")


@pytest.mark.parametrize("text", [b"", b"m1 N2  abcdefghij\n\tz", b"  A\xe9b_9 x-y%\n", b"abc", b"12345678 123456789 a",
                                  b"M1 N1 N2 N3\nM2 N2 N3 N4\nM3", b"q" * 20 + b" " + b"\n" * 3 + b"E"])
@pytest.mark.parametrize("every", [1, 2, 4])
def test_name_packing_matches_plain_python(text, every):
    want = [_packed_by_hand(t) for t in text.split()[::every]]
    assert _names(text, 0, len(text), every, 0).tolist() == want


def test_memory_mapped_mesh_reads_like_bytes(tmp_path, monkeypatch):
    from linter.parsers.aster import mapped

    lines = [b"COOR_2D"] + [b"N%d %d. 0." % (i, i) for i in range(1, 2001)] + [b"FINSF", b"SEG2"]
    lines += [b"S%d N%d N%d" % (i, i, i + 1) for i in range(1, 2000)] + [b"FINSF", b"GROUP_MA", b"ALL"]
    lines += [b" S%d" % i for i in range(1, 2000)] + [b"FINSF", b"FIN", b""]
    p = tmp_path / "big.mail"
    p.write_bytes(b"\n".join(lines))
    monkeypatch.setattr(mapped, "MAP_ABOVE", 1024)      # map even this small file
    monkeypatch.setattr(mapped, "WINDOW", 4096)
    data = mapped.open_mesh(str(p), 1 << 30)
    assert not isinstance(data, bytes)
    a, b = read_mail(data, "m"), read_mail(p.read_bytes(), "b")
    assert (a.node_count, a.cell_count) == (b.node_count, b.cell_count) == (2000, 1999)
    assert a.group_cells("ALL").tolist() == b.group_cells("ALL").tolist() == list(range(1999))
    np.testing.assert_allclose(a.bbox[1], [2000, 0, 0])
