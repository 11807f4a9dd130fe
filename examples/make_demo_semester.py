"""Write the FICTIONAL demo semester and proposals used by ``opdplan fit``.

The semester file and the proposals are invented for the opdplan demo: programs and
targets come from catalogs/demo_targets.csv; hours and configurations are drawn with a
fixed seed.  Run: ``python examples/make_demo_semester.py``
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd

HERE = Path(__file__).resolve().parent
SEMESTER = """# FICTIONAL semester for the opdplan demo: invented calendar and weather statistics.
[semester]
start = "{start}"
end = "{end}"

{calendar}
[weather]   # fraction of night time usable, by month (invented)
usable_fraction = {{ 4 = 0.8, 5 = 0.75, 6 = 0.65, 7 = 0.6, 8 = 0.7, 9 = 0.8 }}
"""
CALENDAR = [("compact", "2027-04-01", "2027-05-31"), ("medium", "2027-06-01", "2027-07-31"),
            ("long", "2027-08-01", "2027-09-30")]  # fmt: skip


def calendar(end: str) -> str:
    blocks = []
    for cfg, a, b in CALENDAR:
        if a > end:
            break
        b = min(b, end)
        blocks.append(f'[[calendar]]\nconfiguration = "{cfg}"\nfrom = "{a}"\nto = "{b}"\n')
    return "\n".join(blocks)


def main() -> None:
    rng = np.random.default_rng(2027)
    (HERE / "demo_semester.toml").write_text(
        SEMESTER.format(start="2027-04-01", end="2027-09-30", calendar=calendar("2027-09-30"))
    )
    (HERE / "demo_semester_short.toml").write_text(
        SEMESTER.format(start="2027-04-10", end="2027-05-09", calendar=calendar("2027-05-09"))
    )
    cat = pd.read_csv(HERE.parent / "catalogs" / "demo_targets.csv", comment="#")
    science = cat[cat["kind"] == "science"]
    rows = []
    for _, t in science.iterrows():
        if rng.random() < 0.35:
            continue
        cfg = rng.choice(["compact", "medium", "long"], p=[0.4, 0.35, 0.25])
        rows.append({"program": t["program"], "target": t["name"], "configuration": cfg,
                     "hours": float(rng.choice([2, 3, 4, 6, 8, 12])),
                     "priority": int(t["priority"])})  # fmt: skip
    with open(HERE / "demo_proposals.csv", "w") as f:
        f.write("# FICTIONAL proposals for the opdplan demo semester\n")
        pd.DataFrame(rows).to_csv(f, index=False)


if __name__ == "__main__":
    main()
