"""``habit crystal``: what habit knows about a crystal, and its conventional setting."""

from __future__ import annotations

import click

from habit.cli._common import crystal_options, json_option


@click.command("crystal")
@click.argument("args", nargs=-1, metavar="CRYSTAL")
@crystal_options
@click.option(
    "--conventional",
    is_flag=True,
    help="Also show spglib's conventional setting and the matrix that carries your "
    "Miller indices into it (needs atom positions).",
)
@json_option
def command(
    args: tuple[str, ...],
    cell: str | None,
    crystal_class: str | None,
    space_group: str | None,
    conventional: bool,
    json_path: str | None,
) -> None:
    """Describe CRYSTAL: cell, class, space group, setting and the source of the numbers."""
    from habit.cli._common import crystal_header, crystal_json, resolve_crystal, write_json
    from habit.errors import InputError

    crystal, rest = resolve_crystal(args, cell, crystal_class, space_group)
    if rest:
        raise InputError(f"unexpected argument {rest[0]!r}; habit crystal takes one crystal.")
    data = {"crystal": crystal_json(crystal)}
    if crystal.forms is not None:
        data["forms"] = {
            "kind": crystal.forms.kind,
            "source": crystal.forms.source,
            "values": {crystal.format_face(h, ""): v for h, v in crystal.forms.as_dict().items()},
        }
    axes = {
        "standard": "the conventional axes of the class",
        "rhombohedral": "rhombohedral axes",
        "unique-c": "monoclinic, unique axis c",
        "unique-a": "monoclinic, unique axis a",
    }[crystal.setting]
    lines = [
        crystal_header(crystal),
        f"axes: {axes}; cell volume {crystal.volume:.3f} Å³",
    ]
    sg = crystal.space_group
    if sg is not None:
        from habit.spacegroups import space_group as lookup_space_group

        standard = lookup_space_group(int(sg.number)).symbol
        if standard != sg.symbol:
            lines.append(
                f"space group {sg.symbol} is a setting of {standard} (No. {sg.number}); "
                "Miller indices refer to your cell"
            )
    if crystal.source:
        lines.append(f"source: {crystal.source}")
    if conventional:
        std, matrix = crystal.conventional()
        data["conventional"] = {"crystal": crystal_json(std), "hkl_matrix": matrix}
        lines.append("conventional setting: " + crystal_header(std))
        rows = ["  [" + " ".join(f"{x:>6g}" for x in row) + " ]" for row in matrix.tolist()]
        lines.append("faces transform as (hkl)_conventional = (hkl)_given · M, with M =")
        lines.extend(rows)
    if json_path != "-":
        click.echo("\n".join(lines))
    if json_path is not None:
        write_json(data, json_path)
