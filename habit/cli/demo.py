"""``habit demo``: the main job on a bundled example, outputs written to a folder."""

from __future__ import annotations

import click


@click.command("demo")
@click.option(
    "--out",
    "out_dir",
    default="demo-output",
    show_default=True,
    metavar="DIR",
    help="Folder for the outputs (created if missing).",
)
def command(out_dir: str) -> None:
    """Run the Wulff construction on the bundled demo crystal and write its outputs.

    The demo crystal (structures/demo.toml) is an invented scenario: a batch of
    fluorite crystals drawn from invented central distances. Writes the form table
    (table.txt), a drawing (shape.png, shape.svg), the solid (shape.stl, shape.obj) and
    all numbers (shape.json) into DIR.
    """
    import contextlib
    import io as textio
    from pathlib import Path

    from habit.cli._common import (
        atomic_output,
        crystal_header,
        crystal_json,
        write_json,
        write_solid,
    )
    from habit.cli.wulff import draw_shape, print_report, shape_report
    from habit.crystal import STRUCTURES_DIR, read_crystal_file
    from habit.wulff import wulff_shape

    crystal = read_crystal_file(STRUCTURES_DIR / "demo.toml")
    shape = wulff_shape(crystal)
    report = shape_report(shape)
    report["crystal"] = crystal_json(crystal)
    from habit.errors import FileFormatError

    out = Path(out_dir)
    try:
        out.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise FileFormatError(f"cannot make the folder {out}: {exc.strerror}.") from None
    buffer = textio.StringIO()
    with contextlib.redirect_stdout(buffer):
        print_report(report, crystal_header(crystal))
    text = buffer.getvalue()
    click.echo(text, nl=False)
    with atomic_output(out / "table.txt") as handle:
        handle.write(text)
    for suffix in ("png", "svg"):
        draw_shape(shape, str(out / f"shape.{suffix}"))
    write_solid(shape.polyhedron, out / "shape.stl")
    write_solid(shape.polyhedron, out / "shape.obj")
    write_json(report, str(out / "shape.json"))
    click.echo(f"\nThe scenario and its numbers are invented for the demo. Outputs in {out}/:")
    for name in ("table.txt", "shape.png", "shape.svg", "shape.stl", "shape.obj", "shape.json"):
        click.echo(f"  {name}")
