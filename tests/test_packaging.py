"""The installed package is ``lodeline`` alone: ``lodeline.geo``, ``lodeline.tui`` and
``lodeline.demos``, no top-level ``geo`` or ``tui`` of its own.

Top-level ``geo`` and ``tui`` are names other distributions on the package index already
install; one import name per distribution is the Python packaging practice (PyPA's
packaging guide). The slow test builds the wheel, installs it into a fresh virtual
environment beside a stub distribution that brings top-level ``geo`` and ``tui`` packages of
its own (built here from a temporary folder, no network), and checks that both work.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
import sysconfig
import venv
import zipfile
from pathlib import Path

import pytest

import lodeline
from lodeline.geo import __version__

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "demo_traverses" / "greyfen_woodlot_1925.toml"


def test_one_import_name_with_its_version():
    assert lodeline.__version__ == __version__
    assert lodeline.__name__ == "lodeline"


def test_no_module_of_the_project_imports_a_bare_geo_or_tui():
    import re

    bare = re.compile(r"^\s*(from|import)\s+(geo|tui)(\.|\s|$)", re.M)
    found = [
        str(path.relative_to(ROOT))
        for folder in ("geo", "tui", "tests", "demo_traverses")
        for path in (ROOT / folder).rglob("*.py")
        if bare.search(path.read_text(encoding="utf-8"))
    ]
    assert found == []


def _run(*args: str, **kwargs) -> subprocess.CompletedProcess[str]:
    return subprocess.run(args, capture_output=True, text=True, timeout=600, **kwargs)


def _stub_wheel(folder: Path) -> Path:
    """A wheel of an unrelated distribution with top-level ``geo`` and ``tui`` packages."""
    name, version = "other_geo_tui", "1.0"
    wheel = folder / f"{name}-{version}-py3-none-any.whl"
    info = f"{name}-{version}.dist-info"
    files = {
        "geo/__init__.py": "WHO = 'the other geo'\n",
        "tui/__init__.py": "WHO = 'the other tui'\n",
        f"{info}/METADATA": f"Metadata-Version: 2.1\nName: {name}\nVersion: {version}\n",
        f"{info}/WHEEL": "Wheel-Version: 1.0\nGenerator: test\nRoot-Is-Purelib: true\n"
        "Tag: py3-none-any\n",
    }
    record = "".join(f"{path},,\n" for path in files) + f"{info}/RECORD,,\n"
    with zipfile.ZipFile(wheel, "w") as zf:
        for path, text in files.items():
            zf.writestr(path, text)
        zf.writestr(f"{info}/RECORD", record)
    return wheel


@pytest.mark.slow
def test_the_wheel_installs_beside_other_top_level_geo_and_tui(tmp_path: Path):
    # the source tree copied, so that building leaves nothing in the repository
    source = tmp_path / "source"
    shutil.copytree(
        ROOT,
        source,
        ignore=shutil.ignore_patterns(
            ".git", ".venv*", "build", "dist", "*.egg-info", "__pycache__", ".*cache*"
        ),
    )
    wheels = tmp_path / "wheels"
    built = _run(
        sys.executable, "-m", "pip", "wheel", "--no-deps", "--no-build-isolation",
        "--no-index", "-w", str(wheels), str(source),
    )  # fmt: skip
    assert built.returncode == 0, built.stderr[-2000:]
    (ours,) = wheels.glob("lodeline-*.whl")
    with zipfile.ZipFile(ours) as zf:
        tops = {name.split("/")[0] for name in zf.namelist()}
    assert {t for t in tops if not t.endswith(".dist-info")} == {"lodeline"}

    env_dir = tmp_path / "env"
    venv.create(env_dir, with_pip=True)
    python = env_dir / ("Scripts" if os.name == "nt" else "bin") / "python"
    stub = _stub_wheel(tmp_path)
    installed = _run(
        str(python), "-m", "pip", "install", "--no-deps", "--no-index", str(ours), str(stub)
    )
    assert installed.returncode == 0, installed.stderr[-2000:]
    purelib = _run(str(python), "-c", "import sysconfig; print(sysconfig.get_path('purelib'))")
    # the dependencies (numpy, pyproj, ...) from this environment, no network: a .pth read
    # after the fresh environment's own packages, so the two wheels just installed come first
    Path(purelib.stdout.strip(), "zz_dependencies.pth").write_text(
        sysconfig.get_path("purelib") + "\n", encoding="utf-8"
    )

    clean = {k: v for k, v in os.environ.items() if k not in ("PYTHONPATH",)}
    clean["LODELINE_STATE"] = str(tmp_path / "state")
    script = env_dir / ("Scripts" if os.name == "nt" else "bin") / "lodeline"
    for command in ([str(script)], [str(python), "-m", "lodeline"]):
        done = _run(*command, "convert", str(DEMO), cwd=tmp_path, env=clean)
        assert done.returncode == 0, done.stderr[-2000:]
        assert "Greyfen" in done.stdout
    other = _run(
        str(python), "-c", "import geo, tui, lodeline.geo; print(geo.WHO, '|', tui.WHO)",
        cwd=tmp_path, env=clean,
    )  # fmt: skip
    assert other.returncode == 0, other.stderr[-2000:]
    assert other.stdout.strip() == "the other geo | the other tui"
    where = _run(
        str(python), "-c", "import lodeline; print(lodeline.__file__)", cwd=tmp_path, env=clean
    )
    assert Path(where.stdout.strip()).is_relative_to(env_dir)  # the wheel's, not this one's
