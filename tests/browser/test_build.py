"""build.py's own promises: verified vendoring, loud failures, a local Pyodide directory,
the CDN mode's CSP, and a template placeholder that is missing. Source: derived (these are
the build's contract in design.md, not physics)."""
from __future__ import annotations

import json
import shutil
from html import unescape

import pytest

import build

pytestmark = pytest.mark.browser


def test_every_vendored_file_matches_the_release_lock(site_dir):
    lock = json.loads(build.PyodideSource(None).core_bytes("pyodide-lock.json"))
    trimmed = json.loads((site_dir / "pyodide" / "pyodide-lock.json").read_text())
    assert set(trimmed["packages"]) == {"numpy", "scipy", "openblas", "somaward", "somaward-page"}
    for name, entry in trimmed["packages"].items():
        data = (site_dir / "pyodide" / entry["file_name"]).read_bytes()
        assert build.sha256_bytes(data) == entry["sha256"], name
        if name in build.SCIENCE:
            assert entry == lock["packages"][name]
    # The engine wheel's name carries its content hash.
    engine = trimmed["packages"]["somaward"]
    assert engine["sha256"][:12] in engine["file_name"]


def test_pyodide_dir_build_and_its_failures(site_dir, tmp_path, capsys):
    local = tmp_path / "dist"
    shutil.copytree(site_dir / "pyodide", local)
    out = tmp_path / "out"
    assert build.main(["--out", str(out), "--pyodide-dir", str(local)]) == 0
    assert (out / "pyodide" / "pyodide.asm.wasm").read_bytes() == (
        site_dir / "pyodide" / "pyodide.asm.wasm").read_bytes()
    printed = capsys.readouterr().out
    assert "MB" in printed and "--serve" in printed

    numpy = json.loads((local / "pyodide-lock.json").read_text())["packages"]["numpy"]["file_name"]
    wheel = local / numpy
    data = bytearray(wheel.read_bytes())
    data[1000] ^= 0x55
    wheel.write_bytes(bytes(data))
    assert build.main(["--out", str(out), "--pyodide-dir", str(local)]) == 1
    err = capsys.readouterr().err.strip()
    assert err.startswith("build: error: checksum mismatch: " + numpy) and "\n" not in err

    wheel.unlink()
    assert build.main(["--out", str(out), "--pyodide-dir", str(local)]) == 1
    err = capsys.readouterr().err.strip()
    assert err == f"build: error: missing file: {wheel}"


def test_cdn_mode_widens_csp_to_the_cdn_only(tmp_path):
    out = tmp_path / "cdn"
    build.build(out, cdn=True)
    html = unescape((out / "index.html").read_text())
    origin = build.PYODIDE_CDN.split("/pyodide/")[0]
    assert f"script-src 'self' 'wasm-unsafe-eval' {origin};" in html
    assert not (out / "pyodide" / "pyodide.asm.wasm").exists()
    lock = json.loads((out / "pyodide" / "pyodide-lock.json").read_text())
    assert lock["packages"]["numpy"]["file_name"].startswith(build.PYODIDE_CDN)
    assert not lock["packages"]["somaward"]["file_name"].startswith("http")


def test_missing_template_placeholder_fails_the_build(tmp_path, monkeypatch):
    (tmp_path / "bad.html.j2").write_text("<p>{{ build_hash }} {{ no_such_value }}</p>\n")
    monkeypatch.setattr(build, "SRC", tmp_path)
    with pytest.raises(build.BuildError, match=r"template bad.html.j2.*'no_such_value' is undefined"):
        build.render("bad.html.j2", tmp_path / "bad.html", {"build_hash": "x"})
