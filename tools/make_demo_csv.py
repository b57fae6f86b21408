"""Write data_demo/catalog.csv from :func:`partsel.demo.demo_catalog`.

Run from a checkout: ``python tools/make_demo_csv.py``. The file is committed; tests/test_demo.py
checks that it still equals what the generator makes, so rerun this after changing the generator.
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))  # run from a checkout without installing the package

from partsel import demo  # noqa: E402

OUT = ROOT / "data_demo" / "catalog.csv"


def main() -> None:
    start = time.perf_counter()
    frame = demo.demo_catalog()
    OUT.write_text(demo.catalog_csv(frame), encoding="utf-8", newline="")
    print(f"wrote {len(frame)} parts to {OUT} in {time.perf_counter() - start:.2f} s")


if __name__ == "__main__":
    main()
