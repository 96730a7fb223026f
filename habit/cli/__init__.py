"""The ``habit`` command line: a click group whose subcommands load on demand.

Each subcommand lives in its own module in this package and defines a click command
named ``command``. Modules are imported only when their command runs, so ``habit --help``
stays fast. Register a new command by adding one line to ``COMMANDS``.
"""

from __future__ import annotations

import importlib
import sys
from typing import Any

import click

from habit import __version__

__all__ = ["main", "COMMANDS"]

#: command name -> (module, one-line help shown by ``habit --help``)
COMMANDS: dict[str, tuple[str, str]] = {
    "forms": ("habit.cli.forms", "List the faces of a form {hkl}, its multiplicity and name."),
    "angles": ("habit.cli.angles", "Interfacial angles between faces (degrees and minutes)."),
    "crystal": ("habit.cli.crystal", "Describe a crystal; show its conventional setting."),
    "apf": ("habit.cli.apf", "Atomic packing fraction of a structure, per site."),
    "wulff": (
        "habit.cli.wulff",
        "Wulff shape, kinetic shape or habit drawing, with its form table.",
    ),
    "demo": ("habit.cli.demo", "Run the main job on the bundled (invented) demo crystal."),
    "dual": ("habit.cli.dual", "Dual polyhedron by polar reciprocation."),
    "pack": ("habit.cli.pack", "Densest lattice (and double-lattice) packing of a shape."),
    "bfdh": ("habit.cli.bfdh", "Rank forms by the BFDH rule (d_eff in Å) and draw the habit."),
    "bonds": ("habit.cli.bonds", "Broken-bond surface energies of a structure; their Wulff shape."),
    "particle": ("habit.cli.particle", "Carve a particle of atoms by a crystal's shape."),
    "index": ("habit.cli.index", "Miller indices of measured faces; cell shape from angles."),
    "orient": ("habit.cli.orient", "Crystal axes in the lab frame from measured faces."),
    "stereo": ("habit.cli.stereo", "Stereogram of faces and measured poles."),
    "map": ("habit.cli.map", "Map which forms show over two form values, refined at boundaries."),
    "sample": ("habit.cli.sample", "Monte Carlo over uncertain form values: odds and intervals."),
    "batch": ("habit.cli.batch", "Shapes for a folder of crystal files or a CSV of energy sets."),
}


class _LazyGroup(click.Group):
    """A group that imports a subcommand's module only when that command is used."""

    def list_commands(self, ctx: click.Context) -> list[str]:
        return sorted(COMMANDS)

    def get_command(self, ctx: click.Context, cmd_name: str) -> click.Command | None:
        entry = COMMANDS.get(cmd_name)
        if entry is None:
            return None
        module = importlib.import_module(entry[0])
        command: click.Command = module.command
        return command

    def format_commands(self, ctx: click.Context, formatter: click.HelpFormatter) -> None:
        rows = [(name, COMMANDS[name][1]) for name in self.list_commands(ctx)]
        if rows:
            with formatter.section("Commands"):
                formatter.write_dl(rows)

    def invoke(self, ctx: click.Context) -> Any:
        from habit.errors import HabitError

        try:
            return super().invoke(ctx)
        except HabitError as exc:
            if ctx.obj and ctx.obj.get("traceback"):
                raise
            click.echo(f"Error: {exc}", err=True)
            sys.exit(1)


@click.group(cls=_LazyGroup, context_settings={"help_option_names": ["-h", "--help"]})
@click.option("-T", "--traceback", is_flag=True, help="Show the full stack on errors.")
@click.version_option(version=__version__, prog_name="habit")
@click.pass_context
def main(ctx: click.Context, traceback: bool) -> None:
    """Habit: crystal shapes with every face indexed.

    Wulff constructions from surface energies, habit drawings from central distances,
    face indexing from goniometer readings, duals, packings and particles.
    Lengths are in ångström, angles in degrees, energies in J/m².
    """
    ctx.ensure_object(dict)
    ctx.obj["traceback"] = traceback
