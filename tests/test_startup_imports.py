"""Start-up (issue 7): scipy is imported only when a power fit needs it.

scipy costs most of a second to import, so the command line and the straight-line
methods must not pay for it. Each check runs a fresh interpreter and looks at
``sys.modules`` afterwards.
"""

from __future__ import annotations

import subprocess
import sys

from support import SAMPLE_DATA


def _modules_after(code: str) -> set[str]:
    script = code + "\nimport sys\nprint(' '.join(sorted(sys.modules)))\n"
    result = subprocess.run(
        [sys.executable, "-c", script], capture_output=True, text=True, timeout=120
    )
    assert result.returncode == 0, result.stderr
    return set(result.stdout.splitlines()[-1].split())


def _imports_scipy(modules: set[str]) -> bool:
    return any(m == "scipy" or m.startswith("scipy.") for m in modules)


def test_importing_the_command_line_and_asking_for_help_do_not_import_scipy():
    assert not _imports_scipy(_modules_after("import scalewright.cli"))
    help_run = (
        "import contextlib, io\n"
        "from scalewright import cli\n"
        "with contextlib.redirect_stdout(io.StringIO()), contextlib.suppress(SystemExit):\n"
        "    cli.main(['--help'])\n"
    )
    modules = _modules_after(help_run)
    assert "scalewright.cli" in modules and not _imports_scipy(modules)


def test_a_z_score_fit_does_not_import_scipy_but_a_box_cox_fit_does(tmp_path):
    data = SAMPLE_DATA / "harvest_2025.csv"

    def fit(method: str) -> set[str]:
        project = tmp_path / f"{method}.swproj"
        return _modules_after(
            "import contextlib, io\n"
            "from scalewright import cli\n"
            "with contextlib.redirect_stdout(io.StringIO()):\n"
            f"    status = cli.main(['fit', {str(data)!r}, '-m', 'yield_kg={method}', "
            f"'-p', {str(project)!r}])\n"
            "assert status == 0\n"
        )

    assert not _imports_scipy(fit("zscore"))
    # The contrast shows the check can fail: Box-Cox's lambda is found with scipy's optimiser.
    assert _imports_scipy(fit("boxcox"))
