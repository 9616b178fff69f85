"""The HTML report: every section present, every image embedded (no network resources), user
strings escaped (HTML5 escaping rules), and the README's main command writes it."""

import os
import re
import subprocess
import sys

from pirchain.interface.cli import main
from pirchain.interface.demo_text import DEMO_TOML
from pirchain.interface.report import SECTIONS

EVIL = "<script>alert(1)</script>"


def small_design(tmp_path):
    text = (
        DEMO_TOML.replace('name = "Tern-2 reading-room wall sensor (demo)"', f'name = "{EVIL}"')
        .replace("trials = 36", "trials = 1")
        .replace("bearings = [-50, -30, -15, 0, 15, 30, 50]", "bearings = [0, 30]")
        .replace("coverage_x_max = 16", "coverage_x_max = 6")
        .replace("coverage_cell = 1.0", "coverage_cell = 1.5")
        .replace("d_max = 30", "d_max = 24")
        .replace("step = 1.5", "step = 3")
        .replace(
            'sensitivity_values = ["62k", "91k", "150k", "270k", "470k", "820k"]',
            'sensitivity_values = ["91k", "470k"]',
        )
    )
    path = tmp_path / "small.toml"
    path.write_text(text, encoding="utf-8")
    return path


def test_report_sections_images_and_escaping(tmp_path, capsys):
    out = tmp_path / "r.html"
    assert main(["report", str(small_design(tmp_path)), "-o", str(out)]) == 0
    page = out.read_text(encoding="utf-8")
    for title in SECTIONS:
        assert f"<h2>{title}</h2>" in page, title
    srcs = re.findall(r'src="([^"]*)"', page)
    assert len(srcs) >= 11
    assert all(s.startswith("data:image/") for s in srcs)
    assert "http://" not in page and "https://" not in page
    assert EVIL not in page
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in page
    assert "accredited laboratory" in page
    # never overwritten without --force
    assert main(["report", str(small_design(tmp_path)), "-o", str(out)]) == 2
    capsys.readouterr()


def test_readme_main_command_writes_the_demo_report(tmp_path):
    # README: `python3 -m pip install . && pirchain` — the installed entry point is the CLI
    # module's main(); run it with no arguments in an empty folder.
    def run_main():
        return subprocess.run(
            [sys.executable, "-m", "pirchain.interface.cli"],
            cwd=tmp_path,
            capture_output=True,
            text=True,
            check=False,
            timeout=600,
            env=dict(os.environ, MPLBACKEND="Agg"),
        )

    proc = run_main()
    assert proc.returncode == 0, proc.stderr
    assert (tmp_path / "pirchain-report.html").exists()
    assert "accredited laboratory" in proc.stdout
    again = run_main()
    assert again.returncode == 0 and (tmp_path / "pirchain-report-2.html").exists()
