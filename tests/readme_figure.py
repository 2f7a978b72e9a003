"""Regenerate reports/example/report-figure.png: the coefficient figure of a report on the bundled NaCl data.

    python tests/readme_figure.py [STORE]

Uses a throwaway store seeded from the bundled data unless STORE is given.
"""

from __future__ import annotations

import sys
import tempfile
from pathlib import Path

from saltbench.api import Session, make_report
from saltbench.comparison.settings import CompareSettings

MODELS = ("davies", "extended-debye-huckel", "pitzer", "bromley")


def main(argv: list[str]) -> None:
    with tempfile.TemporaryDirectory() as tmp:
        store = argv[0] if argv else str(Path(tmp) / "store.sqlite")
        session = Session(store)
        result = make_report(session, ["NaCl"], CompareSettings(models=MODELS), folder=Path(tmp) / "out",
                             command="saltbench report NaCl --models " + ",".join(MODELS))
        png = next(p for p in result.files if p.name.endswith(".coefficients.png"))
        target = Path(__file__).resolve().parents[1] / "reports" / "example" / "report-figure.png"
        target.write_bytes(png.read_bytes())
        session.store.close()
        print(f"wrote {target}")


if __name__ == "__main__":
    main(sys.argv[1:])
