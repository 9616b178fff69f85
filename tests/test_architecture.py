"""The layout keeps its promises (issue 11; docs/model.md, "One home for every rule"):
each layer imports only the layers below it, nothing outside a stage's own module tells
stage types apart, the kernels' cache fingerprint covers every source the compiled pass is
built from, the test oracles use nothing of the engine, modules stay small, and the code
follows ruff."""

import ast
import pathlib
import re
import shutil
import subprocess
import sys

import pytest

ROOT = pathlib.Path(__file__).resolve().parent.parent
PKG = ROOT / "pirchain"

# What each part of the package may import from pirchain (besides itself).
ALLOWED = {
    "errors": set(),
    "units": {"errors"},
    "settings": {"errors"},
    "physics": {"errors", "units"},
    "circuit": {"errors", "units", "physics"},
    "logic": {"errors"},
    "kernels": {"physics", "circuit", "logic"},
    "chain": {"errors", "units", "physics", "circuit", "logic", "kernels"},
    "signoff": {"errors"},
    "design": {"errors", "settings", "signoff", "physics", "circuit", "chain"},
    "analysis": {"errors", "units", "settings", "physics", "circuit", "logic", "chain", "design"},
    "production": set("errors units settings signoff physics circuit logic chain design".split())
    | {"analysis"},
    "calibration": set("errors units settings signoff physics circuit logic chain design".split())
    | {"analysis"},
    "interface": set("errors units settings signoff physics circuit logic chain design".split())
    | {"analysis", "production", "calibration", "__init__"},
    "__init__": {"errors"},
}
STAGE_CLASSES = {
    "NonInvertingBandPass": "opamp_stages",
    "InvertingBandPass": "opamp_stages",
    "_OpAmpBandPass": "opamp_stages",
    "RCHighPass": "passive_stages",
    "RCLowPass": "passive_stages",
    "_PassiveRC": "passive_stages",
    "TransferStage": "transfer_stage",
}


def modules():
    for path in sorted(PKG.rglob("*.py")):
        rel = path.relative_to(PKG)
        part = rel.parts[0].removesuffix(".py")
        yield path, rel, part, ast.parse(path.read_text(encoding="utf-8"))


def pirchain_imports(tree, rel):
    """Top-level pirchain parts a module imports (relative imports resolved)."""
    package = list(rel.parts[:-1])  # e.g. ["interface"] for pirchain/interface/cli.py
    out = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom):
            if node.level:
                target = package[: len(package) - (node.level - 1)]
                target += node.module.split(".") if node.module else []
            elif node.module and node.module.startswith("pirchain"):
                target = node.module.split(".")[1:]
            else:
                continue
            out.add(target[0] if target else "__init__")  # "from .. import __version__"
        elif isinstance(node, ast.Import):
            for a in node.names:
                if a.name.startswith("pirchain."):
                    out.add(a.name.split(".")[1])
    return out


def test_each_layer_imports_only_the_layers_below_it():
    bad = []
    for _path, rel, part, tree in modules():
        allowed = ALLOWED[part] | {part}
        for name in pirchain_imports(tree, rel):
            if name not in allowed:
                bad.append(f"{rel} imports pirchain.{name}")
    assert not bad, bad


def test_no_stage_type_switch_outside_the_stage_s_own_module():
    bad = []
    for _path, rel, _part, tree in modules():
        for node in ast.walk(tree):
            if isinstance(node, ast.Call) and getattr(node.func, "id", "") == "isinstance":
                names = {n.id for n in ast.walk(node.args[1]) if isinstance(n, ast.Name)}
                for name in names & set(STAGE_CLASSES):
                    if rel.stem != STAGE_CLASSES[name]:
                        bad.append(f"{rel}: isinstance(…, {name})")
    assert not bad, bad


def test_kernel_cache_fingerprint_covers_every_compiled_source():
    from pirchain import kernels

    listed = set(kernels.SOURCES)
    for path in sorted((PKG / "kernels").glob("*.py")):
        rel = path.relative_to(PKG)
        assert str(rel) in listed, rel
        tree = ast.parse(path.read_text(encoding="utf-8"))
        for node in ast.walk(tree):
            if isinstance(node, ast.ImportFrom) and node.level == 2 and node.module:
                # "from ..physics import pose" or "from ..physics.optics import X"
                mod = node.module.replace(".", "/")
                files = [f"{mod}/{a.name}.py" for a in node.names]
                files = [f for f in files if (PKG / f).exists()] or [f"{mod}.py"]
                for f in files:
                    assert f in listed, f"{rel} compiles code from {f}, not in SOURCES"


def _imported_names(tree):
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom):
            yield from [node.module or ""] + [a.name for a in node.names]
        elif isinstance(node, ast.Import):
            yield from (a.name for a in node.names)


def test_the_oracles_use_nothing_of_the_engine():
    tree = ast.parse((ROOT / "tests" / "oracles.py").read_text(encoding="utf-8"))
    names = list(_imported_names(tree))
    assert any(n.startswith("pirchain.") for n in names)  # it does use parameter objects
    assert not any(n.startswith(("pirchain.kernels", "pirchain.chain")) for n in names)
    for _path, rel, _part, tree in modules():
        assert not any("oracles" in n for n in _imported_names(tree)), rel


def test_modules_stay_small_and_cite_only_what_exists():
    for path, rel, _part, _tree in modules():
        text = path.read_text(encoding="utf-8")
        assert text.count("\n") <= 600, f"{rel}: {text.count(chr(10))} lines"
        assert "REFERENCES.md" not in text and "DESIGN.md" not in text, rel
    # every docs/*.md that a module, test, benchmark or page names is in the repository
    sources = [*ROOT.glob("pirchain/**/*.py"), *ROOT.glob("tests/*.py")]
    sources += [*ROOT.glob("benchmarks/*.py"), *ROOT.glob("docs/*.md"), ROOT / "README.md"]
    for path in sources:
        text = path.read_text(encoding="utf-8")
        for doc in set(re.findall(r"docs/[\w-]+\.md", text)):
            assert (ROOT / doc).exists(), (path.name, doc)
        if path.name != "test_architecture.py":
            assert "REFERENCES.md" not in text, path.name


@pytest.mark.skipif(shutil.which("ruff") is None, reason="ruff comes with the test extra")
def test_code_follows_ruff():
    dirs = ["pirchain", "tests", "benchmarks", "examples"]
    lint = subprocess.run(["ruff", "check", *dirs], cwd=ROOT, capture_output=True, text=True)
    assert lint.returncode == 0, lint.stdout[-3000:]
    fmt = subprocess.run(
        ["ruff", "format", "--check", *dirs], cwd=ROOT, capture_output=True, text=True
    )
    assert fmt.returncode == 0, fmt.stdout[-3000:]


def test_command_line_does_not_import_the_compiler_to_show_help():
    code = (
        "import sys\n"
        "from pirchain.interface.cli import build_parser\n"
        "build_parser()\n"
        "print('numba' in sys.modules, 'matplotlib' in sys.modules)"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.split() == ["False", "False"]


def test_light_commands_load_neither_the_compiler_nor_the_plotting_library():
    # issue 17: --help, check, demo-design and netlist answer in a fraction of a second; the
    # compiler (numba), the plotting library (matplotlib) and python-control are loaded only by
    # commands that compute (inspected in a fresh interpreter's sys.modules)
    code = (
        "import sys, contextlib, io\n"
        "from pirchain.interface.cli import main\n"
        "argv = sys.argv[1:]\n"
        "with contextlib.redirect_stdout(io.StringIO()):\n"
        "    try:\n"
        "        main(argv)\n"
        "    except SystemExit:\n"
        "        pass\n"
        "print(sorted(m for m in ('numba', 'matplotlib', 'control', 'distributed')"
        " if m in sys.modules))\n"
    )
    import tempfile

    with tempfile.TemporaryDirectory() as tmp:
        for args in (["--help"], ["check"], ["demo-design", "-o", f"{tmp}/d.toml"],
                     ["netlist", "-o", f"{tmp}/n.cir"]):  # fmt: skip
            out = subprocess.run([sys.executable, "-c", code, *args], capture_output=True,
                                 text=True, check=True)  # fmt: skip
            assert out.stdout.strip().splitlines()[-1] == "[]", (args, out.stdout[-300:])


def test_stale_kernel_caches_of_other_versions_are_pruned_and_fresh_ones_kept(tmp_path):
    # issue 17: a folder per source fingerprint; one unused for STALE_DAYS is removed when a
    # new one is made, a recently used one (another environment's version) and ours stay
    import os

    from pirchain import kernels

    now = 2_000_000_000.0
    day = 86400.0
    folders = {"kernels-old": now - (kernels.STALE_DAYS + 1) * day,
               "kernels-recent": now - (kernels.STALE_DAYS - 1) * day,
               "kernels-ours": now - 400 * day, "notours-old": now - 400 * day}  # fmt: skip
    for name, when in folders.items():
        (tmp_path / name).mkdir()
        (tmp_path / name / "f.nbi").write_bytes(b"x")
        for p in (tmp_path / name / "f.nbi", tmp_path / name):
            os.utime(p, (when, when))
    # a new file in an old folder means it is still used
    (tmp_path / "kernels-old2").mkdir()
    (tmp_path / "kernels-old2" / "new.nbc").write_bytes(b"x")
    os.utime(tmp_path / "kernels-old2", (now - 400 * day,) * 2)
    os.utime(tmp_path / "kernels-old2" / "new.nbc", (now - day,) * 2)
    removed = kernels.prune_stale(str(tmp_path), str(tmp_path / "kernels-ours"), now=now)
    assert [os.path.basename(p) for p in removed] == ["kernels-old"]
    left = sorted(p.name for p in tmp_path.iterdir())
    assert left == ["kernels-old2", "kernels-ours", "kernels-recent", "notours-old"]
