"""The built wheel carries the templates, stylesheet and fonts, and renders.

The wheel is built from a copy of the source tree (so no stale ``build/``
folder can leak into it), installed without dependencies into a fresh
virtual environment in a temporary folder, and exercised there with a
Python that cannot see the checkout. The dependencies (weasyprint, jinja2,
...) come from the test environment through a path file, so nothing is
downloaded except the build backend that ``pip wheel`` fetches for its
isolated build, exactly as a user's ``pip install`` would.
"""

from __future__ import annotations

import json
import os
import shutil
import site
import subprocess
import sys
import textwrap
import zipfile
from pathlib import Path
from typing import Any

import pytest

REPO = Path(__file__).resolve().parents[2]

FONT_FILES = ["DejaVuSans-Bold.ttf", "DejaVuSans-Oblique.ttf", "DejaVuSans.ttf"]

CHECK_SCRIPT = textwrap.dedent(
    """
    import io
    import json
    from importlib.resources import files
    from pathlib import Path

    from pypdf import PdfReader

    import prepkit
    from prepkit.report.render import html_to_pdf, render_html
    from prepkit.report.safety import AssetFetcher

    root = Path(str(files("prepkit.templates")))
    names = sorted(
        p.relative_to(root).as_posix()
        for p in root.rglob("*")
        if p.is_file() and "__pycache__" not in p.parts
    )
    package_root = Path(prepkit.__file__).parent
    packages = sorted(
        ".".join(p.parent.relative_to(package_root.parent).parts)
        for p in package_root.rglob("__init__.py")
    )
    fetcher = AssetFetcher()
    html = render_html(
        "base.html.j2",
        {"title": "Wheel check", "page_size": "A4", "provenance": "installed wheel"},
    )
    pdf = html_to_pdf(html, page_size="A4", title="Wheel check", fetcher=fetcher)
    fonts = sorted(
        str(font.get_object()["/BaseFont"])
        for page in PdfReader(io.BytesIO(pdf)).pages
        for font in page["/Resources"]["/Font"].get_object().values()
    )
    print(json.dumps({
        "prepkit_file": prepkit.__file__,
        "templates_root": str(root),
        "names": names,
        "packages": packages,
        "served": fetcher.served,
        "refused": [r.url for r in fetcher.refused],
        "pdf_head": pdf[:5].decode("latin-1"),
        "fonts": fonts,
    }))
    """
)


def _run(args: list[str], **kwargs: Any) -> subprocess.CompletedProcess[str]:
    done = subprocess.run(args, capture_output=True, text=True, timeout=540, check=False, **kwargs)
    assert done.returncode == 0, f"{' '.join(args)}\n{done.stdout}\n{done.stderr}"
    return done


def _copy_source(dest: Path) -> Path:
    src = dest / "src"
    src.mkdir()
    ignore = shutil.ignore_patterns("__pycache__", "*.pyc", "*.egg-info", ".*")
    for name in ("pyproject.toml", "README.md", "LICENSE", "LICENSE.txt", "setup.py", "setup.cfg"):
        if (REPO / name).is_file():
            shutil.copy2(REPO / name, src / name)
    for folder in ("prepkit", "templates", "sample_workbooks"):
        shutil.copytree(REPO / folder, src / folder, ignore=ignore)
    return src


def _source_packages() -> set[str]:
    return {
        ".".join(p.parent.relative_to(REPO).parts)
        for p in (REPO / "prepkit").rglob("__init__.py")
        if "__pycache__" not in p.parts
    }


@pytest.mark.slow
def test_installed_wheel_ships_templates_and_renders(tmp_path: Path) -> None:
    src = _copy_source(tmp_path)
    dist = tmp_path / "dist"
    _run([sys.executable, "-m", "pip", "wheel", "--no-deps", "--wheel-dir", str(dist), str(src)])
    (wheel,) = dist.glob("prepkit-*.whl")

    with zipfile.ZipFile(wheel) as archive:
        members = set(archive.namelist())
        top_level = next(n for n in members if n.endswith(".dist-info/top_level.txt"))
        assert archive.read(top_level).decode().split() == ["prepkit"]
    for name in ["base.html.j2", "components.html.j2", "pack.css", "__init__.py"]:
        assert f"prepkit/templates/{name}" in members, name
    for name in [*FONT_FILES, "LICENSE"]:
        assert f"prepkit/templates/fonts/{name}" in members, name
    assert not any(m.startswith("templates/") for m in members)

    venv = tmp_path / "venv"
    _run([sys.executable, "-m", "venv", "--without-pip", str(venv)])
    python = venv / ("Scripts/python.exe" if os.name == "nt" else "bin/python")
    _run(
        [sys.executable, "-m", "pip", "--python", str(python), "install", "--no-deps"]
        + ["--no-index", "--quiet", str(wheel)]
    )
    purelib = _run(
        [str(python), "-c", "import sysconfig; print(sysconfig.get_paths()['purelib'])"]
    ).stdout.strip()
    # Dependencies from the test environment; a plain path line, so the
    # checkout's editable-install hook in that folder is not run.
    (Path(purelib) / "_test_dependencies.pth").write_text("\n".join(site.getsitepackages()) + "\n")

    env = {k: v for k, v in os.environ.items() if k not in ("PYTHONPATH", "PYTHONHOME")}
    env.update(PYTHONNOUSERSITE="1", SOURCE_DATE_EPOCH="1700000000")
    result = json.loads(_run([str(python), "-c", CHECK_SCRIPT], cwd=tmp_path, env=env).stdout)

    installed = venv.resolve()
    assert Path(result["prepkit_file"]).resolve().is_relative_to(installed)
    root = Path(result["templates_root"]).resolve()
    assert root.is_relative_to(installed)
    for name in ["base.html.j2", "components.html.j2", "pack.css", "fonts/LICENSE"]:
        assert name in result["names"], name
    assert sorted(n for n in result["names"] if n.endswith(".ttf")) == [
        f"fonts/{f}" for f in FONT_FILES
    ]

    assert result["pdf_head"] == "%PDF-"
    assert result["fonts"] and all("DejaVu" in name for name in result["fonts"])
    assert result["refused"] == []
    served = result["served"]
    assert served and all(url.startswith(root.as_uri()) for url in served)
    assert root.joinpath("pack.css").as_uri() in served
    assert sum(url.endswith(".ttf") for url in served) == len(FONT_FILES)

    missing = _source_packages() - set(result["packages"])
    assert not missing, (
        f"subpackages missing from the wheel: {sorted(missing)}; "
        "add them to [tool.setuptools] packages in pyproject.toml"
    )
