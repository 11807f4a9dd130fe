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
{weather}"""
#: invented monthly statistics: clear nights, mean run of lost nights, partial nights,
#: median seeing (arcsec) and coherence time (ms)
WEATHER = {4: (0.80, 2.0, 0.20, 0.80, 4.0), 5: (0.75, 2.5, 0.25, 0.85, 3.5),
           6: (0.65, 3.0, 0.30, 0.95, 3.0), 7: (0.60, 3.5, 0.30, 1.00, 2.8),
           8: (0.70, 3.0, 0.25, 0.90, 3.2), 9: (0.80, 2.0, 0.20, 0.80, 4.0)}


def weather(months: list[int]) -> str:
    blocks = []
    for m in months:
        clear, spell, partial, seeing, tau = WEATHER[m]
        blocks.append(f"[[weather]]   # month {m}: invented statistics\nmonth = {m}\n"
                      f"clear_nights = {clear}\nlost_spell_nights = {spell}\n"
                      f"partial_nights = {partial}\nseeing_arcsec = {seeing}\n"
                      f"seeing_spread = 0.3\ncoherence_ms = {tau}\ncoherence_spread = 0.4\n")
    return "\n".join(blocks)


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
    (HERE / "demo_semester.toml").write_text(SEMESTER.format(
        start="2027-04-01", end="2027-09-30", calendar=calendar("2027-09-30"),
        weather=weather([4, 5, 6, 7, 8, 9])))  # fmt: skip
    (HERE / "demo_semester_short.toml").write_text(SEMESTER.format(
        start="2027-04-10", end="2027-05-09", calendar=calendar("2027-05-09"),
        weather=weather([4, 5])))  # fmt: skip
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
