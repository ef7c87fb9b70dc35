"""Start-up costs, each in a new process (issue 20): ``import phasekit``, ``phasekit --help`` and a
first ``pk.solubility``; also which heavy packages ``import phasekit`` loads. Prints medians and the
load; asserts nothing.
"""

from __future__ import annotations

import subprocess
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))

from common import report  # noqa: E402

HEAVY = ("plotly", "dash", "matplotlib", "dask", "openpyxl")


def _wall(cmd: list, repeat: int = 5) -> float:
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        subprocess.run(cmd, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        times.append(time.perf_counter() - t0)
    times.sort()
    return times[len(times) // 2]


def main() -> None:
    py = sys.executable
    exe = str(Path(py).with_name("phasekit"))
    _wall([py, "-c", "import phasekit; import phasekit as pk; pk.solubility('KCl', temp_c=40)"], repeat=1)  # warm caches
    t_bare = _wall([py, "-c", "pass"])
    report("bare python start (for reference)", t_bare, 0.3, "s")
    report("python -c 'import phasekit' (new process)", _wall([py, "-c", "import phasekit"]), 0.3, "s")
    report("phasekit --help (new process)", _wall([exe, "--help"]), 0.3, "s")
    report("import + first pk.solubility('KCl', 40) (new process)",
           _wall([py, "-c", "import phasekit as pk; pk.solubility('KCl', temp_c=40)"]), 0.5, "s")
    code = ("import sys, phasekit; print(','.join(sorted(m for m in " + repr(HEAVY) +
            " if m in sys.modules)) or 'none')")
    out = subprocess.run([py, "-c", code], check=True, capture_output=True, text=True).stdout.strip()
    print(f"heavy packages loaded by 'import phasekit': {out}")


if __name__ == "__main__":
    main()
