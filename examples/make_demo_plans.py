"""Regenerate the invented demo plans.

Writes three files from one in-memory demo plan:

* examples/demo-hop-plan.json (the plan with its model and policy);
* mapping/slip/demo-hop-plan.json, a byte-identical copy of that JSON shipped as package data of
  legbridge.mapping.slip (``shipped_demo_plan_path()``), so ``legbridge review --demo`` can use the
  same bytes on every machine whatever SciPy/NumPy the simulation would run on;
* examples/demo-hop-plan.csv (the flat CSV form; examples only, not shipped in the package).

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
from legbridge.mapping.slip.demo import SHIPPED_DEMO_PLAN
from legbridge.robots.errors import LegbridgeError
from legbridge.robots.files import refuse_existing, write_atomic


def main(argv: list[str] | None = None) -> int:
    argv = sys.argv[1:] if argv is None else argv
    force = "--force" in argv
    here = Path(__file__).resolve().parent
    json_path = here / "demo-hop-plan.json"
    package_json_path = here.parent / "mapping" / "slip" / SHIPPED_DEMO_PLAN
    csv_path = here / "demo-hop-plan.csv"
    try:
        for p in (json_path, package_json_path, csv_path):  # refuse before writing any of them
            refuse_existing(p, force)
    except LegbridgeError as exc:
        print(exc, file=sys.stderr)
        return 2
    plan = demo_plan()
    for c in plan.cases:
        o = plan.metadata["outcomes"][c.name]
        print(f"{c.name:>14}: {o['status']}" + (f" ({o['reason']} at {o['time_s']:.3f} s)" if o["reason"] else ""))
    print(write_plan(plan, json_path, force=force))
    # The package copy is the examples file's bytes, not a second serialisation, so the two cannot drift.
    print(write_atomic(package_json_path, json_path.read_bytes(), force=force))
    print(write_plan(plan_for_flat_formats(plan), csv_path, force=force))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
