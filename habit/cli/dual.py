"""``habit dual``: the dual polyhedron by polar reciprocation."""

from __future__ import annotations

import click

from habit.cli._common import json_option


@click.command("dual")
@click.argument("shape")
@click.option(
    "--scale",
    type=click.Choice(["midsphere", "insphere", "none"]),
    default="midsphere",
    show_default=True,
    help="Radius of the reciprocating sphere: the mean edge distance, the least face "
    "distance, or 1 Å.",
)
@click.option("--plot", "plot_path", metavar="FILE", help="Draw shape and dual (.png/.svg).")
@click.option("--export", "export_path", metavar="FILE", help="Write the dual (.stl/.obj/.json).")
@json_option
def command(
    shape: str, scale: str, plot_path: str | None, export_path: str | None, json_path: str | None
) -> None:
    """The dual of SHAPE: faces become vertices and vertices faces.

    SHAPE is a reference solid's name (cube, cuboctahedron, snub cube, ...), a polyhedron
    JSON written by habit, or a crystal whose Wulff shape is meant. Reciprocation is
    about the Wulff point (or the centroid); each vertex of the dual carries the Miller
    indices of the face it came from.
    """
    from habit.cli._common import check_outputs, write_json, write_solid
    from habit.cli._shapes import describe, resolve_shape

    check_outputs(plot_path, export_path)
    poly, what = resolve_shape(shape)
    result = poly.dual(scale=None if scale == "none" else scale)
    dual = result.polyhedron
    original, reciprocal = describe(poly), describe(dual)
    pairs = []
    for face, vertex in enumerate(result.vertex_of_face.tolist()):
        label = None
        if poly.face_labels is not None:
            label = poly.face_labels[face]
        pairs.append({"face": face, "face_label": label, "dual_vertex": int(vertex)})
    data = {
        "shape": what,
        "original": original,
        "dual": reciprocal,
        "sphere_radius_A": float(result.radius),
        "centre_A": [float(x) for x in result.centre],
        "face_to_dual_vertex": pairs,
        "dual_vertices_A": dual.vertices,
    }
    if json_path != "-":
        click.echo(f"{what}")
        click.echo(
            f"\n{'':<10}{'name':<30}{'V':>5}{'E':>5}{'F':>5}  {'symmetry (order)':<18}"
            f"{'flags':>6}{'volume (Å³)':>14}"
        )
        for row, d in (("original", original), ("dual", reciprocal)):
            sym = f"{d['symmetry']} ({d['symmetry_order']})"
            click.echo(
                f"{row:<10}{d['name'][:29]:<30}{d['n_vertices']:>5}{d['n_edges']:>5}"
                f"{d['n_faces']:>5}  {sym:<18}{d['flag_count']:>6}{d['volume_A3']:>14.5g}"
            )
        click.echo(
            f"\nreciprocated about ({', '.join(f'{x:.4f}' for x in result.centre)}) Å in a "
            f"sphere of radius {result.radius:.4f} Å ({scale})"
        )
        if poly.face_labels is not None:
            click.echo(
                "face -> dual vertex: "
                + ", ".join(f"{p['face_label']}->v{p['dual_vertex']}" for p in pairs[:12])
                + (" ..." if len(pairs) > 12 else "")
            )
    if plot_path:
        from habit.plot import save_figure
        from habit.plot.shape import plot_polyhedra

        arts = plot_polyhedra(
            [poly, dual], [f"{what}:\n{original['name']}", f"dual:\n{reciprocal['name']}"],
            labels=False,
        )
        save_figure(arts[0].faces.axes.figure, plot_path)
    if export_path:
        write_solid(dual, export_path)
    if json_path != "-":
        for path in (plot_path, export_path):
            if path:
                click.echo(f"wrote {path}")
    if json_path is not None:
        write_json(data, json_path)
