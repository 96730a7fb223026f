"""``habit forms``: the faces of a form, its multiplicity, name and whether it is closed."""

from __future__ import annotations

import click

from habit.cli._common import crystal_options, json_option


@click.command("forms", context_settings={"ignore_unknown_options": True})
@click.argument("args", nargs=-1, metavar="CRYSTAL HKL [HKL ...]")
@crystal_options
@json_option
def command(
    args: tuple[str, ...],
    cell: str | None,
    crystal_class: str | None,
    space_group: str | None,
    json_path: str | None,
) -> None:
    """List the faces of each form {hkl} of CRYSTAL.

    CRYSTAL is a CIF file, a crystal TOML file or a bundled name (or give --cell and
    --class instead). HKL is typed as 111, '1 0 -1 1', '(10-11)' or '{100}'.
    Prints the form's name, its multiplicity (number of faces), whether it is closed,
    its d-spacing in Å and its faces.
    """
    from habit.cli._common import crystal_header, crystal_json, parse_faces, resolve_crystal
    from habit.cli._common import write_json
    from habit.errors import InputError

    crystal, rest = resolve_crystal(args, cell, crystal_class, space_group)
    if not rest:
        raise InputError("give at least one form, e.g. 111 or '{10-11}'.")
    faces = parse_faces(crystal, rest)
    records = []
    for hkl in faces:
        members = crystal.expand_form(hkl)
        records.append(
            {
                "form": crystal.format_face(hkl, brackets="{}"),
                "hkl": list(hkl),
                "name": crystal.form_name(hkl),
                "multiplicity": int(len(members)),
                "closed": crystal.is_closed_form(hkl),
                "d_spacing_A": float(crystal.d_spacing(hkl)),
                "faces": [list(map(int, m)) for m in members],
                "face_labels": [crystal.format_face(m) for m in members],
            }
        )
    if json_path != "-":
        click.echo(crystal_header(crystal))
        for rec in records:
            closed = "closed" if rec["closed"] else "open"
            click.echo(
                f"\n{rec['form']}  {rec['name']}, {rec['multiplicity']} faces, {closed} form, "
                f"d = {rec['d_spacing_A']:.4f} Å"
            )
            labels = rec["face_labels"]
            for i in range(0, len(labels), 8):
                click.echo("  " + "  ".join(labels[i : i + 8]))
    if json_path is not None:
        write_json({"crystal": crystal_json(crystal), "forms": records}, json_path)
