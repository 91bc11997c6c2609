"""Regenerate the invented demo plans.

Writes five files from two in-memory demo plans:

* examples/demo-run-plan.json, the biped running plan (alternating legs; the flight leg angle written
  for the landing leg, simulate's flight_swing='policy'), and mapping/slip/demo-run-plan.json, a
  byte-identical copy shipped as package data (``legbridge review --demo`` reviews it on the bundled
  biped, the same bytes on every machine whatever SciPy/NumPy the simulation would run on);
* examples/demo-hop-plan.json, the one-legged hopping plan (the flight leg angle swinging the one leg
  from liftoff to touchdown), its package copy mapping/slip/demo-hop-plan.json, and
  examples/demo-hop-plan.csv (the flat CSV form; examples only, not shipped in the package).

INVENTED scenario (no real robot): a 25 kg lab biped hopping forward at about 1.5 m/s on a 0.70 m
actuated spring-mass leg; ground-height cases -0.06, -0.03, 0, +0.03 and +0.06 m share one open-loop policy
(see legbridge.mapping.slip.demo). Deterministic on one machine: running it twice gives the same files
(other SciPy/NumPy releases or CPUs may change the last digits, within the integration tolerance).
Existing files are refused (nothing is written) unless --force is given.

    python examples/make_demo_plans.py [--force]
"""

from __future__ import annotations

import sys
from pathlib import Path

from legbridge.mapping.plan_writer import write_plan
from legbridge.mapping.slip import demo_plan, plan_for_flat_formats
from legbridge.mapping.slip.demo import SHIPPED_DEMO_PLAN, SHIPPED_DEMO_RUN_PLAN, demo_run_plan
from legbridge.robots.errors import LegbridgeError
from legbridge.robots.files import refuse_existing, write_atomic


def main(argv: list[str] | None = None) -> int:
    argv = sys.argv[1:] if argv is None else argv
    force = "--force" in argv
    here = Path(__file__).resolve().parent
    json_path = here / "demo-hop-plan.json"
    package_json_path = here.parent / "mapping" / "slip" / SHIPPED_DEMO_PLAN
    csv_path = here / "demo-hop-plan.csv"
    run_path = here / "demo-run-plan.json"
    package_run_path = here.parent / "mapping" / "slip" / SHIPPED_DEMO_RUN_PLAN
    try:
        for p in (json_path, package_json_path, csv_path, run_path, package_run_path):  # refuse before writing any
            refuse_existing(p, force)
    except LegbridgeError as exc:
        print(exc, file=sys.stderr)
        return 2
    for plan, path, package_path in ((demo_run_plan(), run_path, package_run_path), (demo_plan(), json_path, package_json_path)):
        for c in plan.cases:
            o = plan.metadata["outcomes"][c.name]
            print(f"{path.name}: {c.name:>14}: {o['status']}" + (f" ({o['reason']} at {o['time_s']:.3f} s)" if o["reason"] else ""))
        print(write_plan(plan, path, force=force))
        # The package copy is the examples file's bytes, not a second serialisation, so the two cannot drift.
        print(write_atomic(package_path, path.read_bytes(), force=force))
        if path == json_path:
            print(write_plan(plan_for_flat_formats(plan), csv_path, force=force))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
