"""Regenerate the invented demo plans: examples/demo-hop-plan.json and examples/demo-hop-plan.csv.

INVENTED scenario (no real robot): a 25 kg lab biped hopping forward at about 1.5 m/s on a 0.70 m
actuated spring-mass leg; ground-height cases -0.06, -0.03, 0, +0.03 and +0.06 m share one open-loop policy
(see legbridge.mapping.slip.demo). Deterministic: running it twice gives the same files.

    python examples/make_demo_plans.py [--force]
"""

from __future__ import annotations

import sys
from pathlib import Path

from legbridge.mapping.plan_writer import write_plan
from legbridge.mapping.slip import demo_plan, plan_for_flat_formats


def main(argv: list[str] | None = None) -> int:
    argv = sys.argv[1:] if argv is None else argv
    force = "--force" in argv
    here = Path(__file__).resolve().parent
    plan = demo_plan()
    for c in plan.cases:
        o = plan.metadata["outcomes"][c.name]
        print(f"{c.name:>14}: {o['status']}" + (f" ({o['reason']} at {o['time_s']:.3f} s)" if o["reason"] else ""))
    print(write_plan(plan, here / "demo-hop-plan.json", force=force))
    print(write_plan(plan_for_flat_formats(plan), here / "demo-hop-plan.csv", force=force))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
