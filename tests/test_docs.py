"""The project's own documents stay in step with the code (issue 10).

docs/checks.md lists every published check (Rall 1959–1977, Rall & Rinzel 1973, Zador, Agmon-Snir &
Segev 1995 …) with the tests that implement it; this file fails when a listed test is gone or no
longer names its check, or when a test names a check the table does not list under it. Common
practice, no source: a bookkeeping test, not physics.
"""

import ast
import re
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
CHECK_ID = re.compile(r"\b(C[1-6]|S10|S3b|S[1-9]|F[1-3]|T[1-9]|M[1-3]|V[12]|P1)\b")


def checks_in_tests():
    """{check id: {"file::function"}} from every test function's source, decorators included."""
    found = {}
    for path in sorted((ROOT / "tests").glob("test_*.py")):
        lines = path.read_text(encoding="utf-8").splitlines()
        for node in ast.parse("\n".join(lines)).body:
            if isinstance(node, ast.FunctionDef) and node.name.startswith("test_"):
                start = min([d.lineno for d in node.decorator_list] + [node.lineno])
                source = "\n".join(lines[start - 1:node.end_lineno])
                for cid in set(CHECK_ID.findall(source)):
                    found.setdefault(cid, set()).add(f"{path.name}::{node.name}")
    return found


def checks_in_doc():
    """{check id: {"file::function"}} from the 'Implemented' table of docs/checks.md."""
    text = (ROOT / "docs" / "checks.md").read_text(encoding="utf-8")
    implemented = text.split("## Implemented", 1)[1].split("## Not yet implemented", 1)[0]
    table = {}
    for line in implemented.splitlines():
        cells = [c.strip() for c in line.strip().strip("|").split("|")]
        if len(cells) == 4 and CHECK_ID.fullmatch(cells[0]):
            table[cells[0]] = set(re.findall(r"`([^`]+::[^`]+)`", cells[3]))
    return table


def test_checks_table_lists_exactly_the_tests_that_name_each_check():
    in_tests, in_doc = checks_in_tests(), checks_in_doc()
    assert len(in_doc) >= 20
    for cid, tests in in_doc.items():
        assert tests, f"{cid}: the table lists no test"
        assert tests <= in_tests.get(cid, set()), f"{cid}: listed but gone or not naming {cid}: " \
                                                   f"{sorted(tests - in_tests.get(cid, set()))}"
    for cid, tests in in_tests.items():
        assert cid in in_doc, f"{cid} is named by {sorted(tests)} but missing from docs/checks.md"
        assert tests <= in_doc[cid], f"{cid}: not listed in docs/checks.md: {sorted(tests - in_doc[cid])}"


def test_a_clone_is_complete():
    """DEVELOPERS.md and the code send readers to files inside the repository only."""
    for name in ("design.md", "style.md", "checks.md"):
        assert (ROOT / "docs" / name).is_file(), name
    texts = [ROOT / "DEVELOPERS.md", ROOT / "README.md", *ROOT.glob("engine/somaward/*.py"),
             *ROOT.glob("tests/**/*.py"), *ROOT.glob("site_src/**/*.js")]
    needle = "../" + "shared"              # spelt in two parts, so that this file passes
    outside = [str(p.relative_to(ROOT)) for p in texts if needle in p.read_text(encoding="utf-8")]
    assert outside == []
