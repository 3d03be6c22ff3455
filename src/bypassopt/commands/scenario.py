"""``bypassopt scenario``: print or write a scenario template."""

import json
import os
import sys

from bypassopt import CAUTION, __version__
from bypassopt.commands._run import EXIT_OK, UsageError

NAME = "scenario"
OUTPUTS = ()


def add_parser(sub, common):
    """Add the ``scenario`` command and its options."""
    p = sub.add_parser(NAME, parents=[common], help="print or write a scenario template",
                       description="Print the built-in demo scenario (with its comments) as a template, or "
                                   "with --scenario FILE the complete scenario that FILE gives after merging "
                                   "over the demo. --write saves it to a file instead.")
    p.add_argument("--write", metavar="FILE", help="write the scenario to FILE instead of printing it")
    p.add_argument("--force", action="store_true", help="overwrite FILE if it exists")
    return p


def run(run, scenario):
    """Print or write the scenario; return (scenario, exit code). Writes nothing into ``--out``."""
    from importlib import resources

    from bypassopt.report import write_text
    from bypassopt.scenario import DEMO_SCENARIO

    args = run.args
    if args.scenario is None:
        text = resources.files("bypassopt").joinpath("data", DEMO_SCENARIO).read_text(encoding="utf-8")
    else:
        text = scenario_to_toml(scenario, header=f"Scenario {args.scenario} merged over the built-in demo scenario "
                                                 f"(bypassopt {__version__}).\nCAUTION: {CAUTION}")
    if args.write:
        if os.path.exists(args.write) and not args.force:
            raise UsageError(f"{args.write} exists; add --force to overwrite it")
        folder = os.path.dirname(os.path.abspath(args.write))
        if not os.path.isdir(folder):
            raise UsageError(f"cannot write {args.write}: the folder {folder} does not exist")
        write_text(args.write, text)
        run.wrote(args.write, listed=False)  # the message below names it
        if run.human:
            print(f"Scenario written to {args.write}. Edit it, then run: bypassopt optimize --scenario "
                  f"{args.write}")
    elif not args.json:
        sys.stdout.write(text)
    return scenario, EXIT_OK


def scenario_to_toml(scenario, header=""):
    """TOML text of a validated scenario (sections and keys in schema order)."""
    from bypassopt.scenario import SCHEMA

    def value(v):
        if isinstance(v, bool):
            return "true" if v else "false"
        if isinstance(v, int):
            return str(v)
        if isinstance(v, float):
            return repr(v)
        if isinstance(v, str):
            return json.dumps(v)
        if isinstance(v, list):
            return "[" + ", ".join(value(x) for x in v) + "]"
        if isinstance(v, dict):
            return "{ " + ", ".join(f"{k} = {value(x)}" for k, x in v.items()) + " }"
        raise TypeError(f"cannot write {type(v).__name__} to TOML")

    lines = [f"# {ln}" if ln else "#" for ln in header.splitlines()]
    for section, keys in SCHEMA.items():
        table = scenario.get(section)
        if not table:
            continue
        lines.append("")
        lines.append(f"[{section}]")
        for key in keys:
            if key in table:
                lines.append(f"{key} = {value(table[key])}")
    return "\n".join(lines).lstrip("\n") + "\n"
