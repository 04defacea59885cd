"""Commands that make documents: ``plot`` (a figure from a figure specification) and ``report``."""

from __future__ import annotations

from pathlib import Path

from ..config.figure_spec import load_spec
from ..config.mission import load_mission
from ..files import FIGURE_FORMATS, check_output_path, inside
from ..outputs.figures import render_spec, save_spec_figure
from ..outputs.report import build_report
from .common import mission_arg

__all__ = ["add_commands"]


def cmd_plot(args):
    spec, digest = load_spec(args.spec)
    out = args.out or spec.out
    if not out:
        out = str(Path(args.spec).with_suffix(".pdf"))
    elif not args.out:
        out = str(inside(Path(args.spec).parent, out, args.spec, "out"))
    check_output_path(out, FIGURE_FORMATS)
    fig, artists, prov = render_spec(spec, base_dir=Path(args.spec).parent, source=args.spec)
    save_spec_figure(fig, out, spec, digest, prov)
    print(f"wrote figure {out} ({len(artists['curves'])} curves)")
    return 0


def cmd_report(args):
    mission, digest = load_mission(args.mission)
    md, html = build_report(mission, digest, args.out)
    print(f"wrote {md} and {html}")
    return 0


def add_commands(sub):
    sp = sub.add_parser("plot", help="draw a figure from a figure specification (TOML)")
    sp.add_argument("spec", help="figure specification file")
    sp.add_argument("--out", help="output file (.pdf, .svg or .png); default from the spec")
    sp.set_defaults(func=cmd_plot)
    sp = sub.add_parser("report", help="concept-document report (Markdown and self-contained HTML)")
    mission_arg(sp)
    sp.add_argument("--out", required=True, help="output folder (created if its parent exists)")
    sp.set_defaults(func=cmd_report)
