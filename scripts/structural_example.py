"""Example structural script: a rib of the tender's front foil, loaded from a panelflow load file.

It uses the JSON export the way a user's own script would, knowing nothing of panelflow:

1. read the load file (``panelflow loads ... -o loads.json``);
2. check that the nodal loads add up to the totals the file reports (lift, drag, moment);
3. treat one body's section as a rib supported at a spar and print the shear force and bending
   moment along its chord, and the reaction the spar must take;
4. optionally, print the moment of one body's loads about a hinge point (a flap's hinge moment).

The rib is a beam along the chord line, clamped at the spar: at a cut at chord position ``xi``,
the free part is the section between the cut and the nearer end (leading edge for cuts ahead of
the spar, trailing edge for cuts behind it). Its loads give the shear (the force component
normal to the chord, positive towards the upper side) and the bending moment (nose-up positive
about the cut point on the chord line, the file's moment convention). This is the usual
free-body reading of a rib (common practice); the rib's own stiffness, the skin and the spar's
flexibility are not modelled.

Usage::

    python scripts/structural_example.py LOADS.json [--body NAME] [--spar 0.35]
        [--rib-spacing 0.2] [--stations 11] [--hinge X,Y]

Loads per metre of span (a file written without a span) are multiplied by ``--rib-spacing`` (the
span of skin each rib carries); a file written with a span is scaled by rib spacing / span.
The results inherit every caution of the load file: inviscid, steady, attached-flow loads with
no safety factor; size real parts to the applicable design code and have them checked under
local codes and by licensed engineering practice.
"""

from __future__ import annotations

import argparse
import json
import math
import sys

import numpy as np

CHECK_TOLERANCE = 1e-9  # relative, as the file's own equilibrium check


def read_load_file(path) -> dict:
    """The JSON load file as a dict; raises ValueError for a file of another kind."""
    with open(path, encoding="utf-8") as fh:
        data = json.load(fh)
    if data.get("format") != "panelflow section loads":
        raise ValueError(f"{path}: not a panelflow load file")
    return data


def _nodes(body: dict):
    n = body["nodes"]
    return (np.asarray(n["x"], float), np.asarray(n["y"], float), np.asarray(n["fx"], float),
            np.asarray(n["fy"], float))


def nose_up_moment(x, y, fx, fy, point) -> float:
    """Nose-up (clockwise) moment of forces at (x, y) about ``point``."""
    return float(-np.sum((x - point[0]) * fy - (y - point[1]) * fx))


def resultant_checks(data: dict) -> list:
    """(quantity, sum of nodal loads, reported total, relative difference) for the totals.

    Lift is normal to the freestream, drag along it (the freestream is at the angle of attack
    to the x-axis); relative differences are taken against the larger of the reported value and
    a thousandth of the force scale q c (times the span), as the file's own check does.
    """
    a = math.radians(data["conditions"]["alpha_deg"])
    ref = data["reference_point"]
    x, y, fx, fy = (np.concatenate(v) for v in zip(*(_nodes(b) for b in data["bodies"])))
    Fx, Fy = float(fx.sum()), float(fy.sum())
    c = data["conditions"]
    force_scale = c["dynamic_pressure"] * c["chord"] * (c["span"] or 1.0)
    sums = {"lift": -Fx * math.sin(a) + Fy * math.cos(a),
            "drag": Fx * math.cos(a) + Fy * math.sin(a),
            "moment": nose_up_moment(x, y, fx, fy, ref)}
    out = []
    for key, value in sums.items():
        reported = data["totals"][key]
        scale = force_scale * (c["chord"] if key == "moment" else 1.0)
        rel = abs(value - reported) / max(abs(reported), 1e-3 * scale)
        out.append((key, value, reported, rel))
    for item in data["totals"]["moments_about"]:
        value = nose_up_moment(x, y, fx, fy, item["point"])
        scale = 1e-3 * force_scale * c["chord"]
        rel = abs(value - item["moment"]) / max(abs(item["moment"]), scale)
        out.append((f"moment about ({item['point'][0]:.4g}, {item['point'][1]:.4g}) m", value,
                    item["moment"], rel))
    return out


def find_body(data: dict, name: str | None) -> dict:
    """The body called ``name`` (default: the first, the main body)."""
    if name is None:
        return data["bodies"][0]
    for body in data["bodies"]:
        if body["name"] == name:
            return body
    names = ", ".join(b["name"] for b in data["bodies"])
    raise ValueError(f"no body named {name!r} in the load file (bodies: {names})")


def rib_diagram(body: dict, spar_fraction: float, stations: np.ndarray, factor: float = 1.0):
    """Shear force and bending moment along the chord of a rib clamped at the spar.

    Parameters
    ----------
    body : dict
        One body of the load file.
    spar_fraction : float
        Spar position as a fraction of this body's chord from its leading edge.
    stations : array_like
        Cut positions, fractions of the chord; a cut at or ahead of the spar takes the part
        ahead of it as the free part, a cut behind the spar the part behind.
    factor : float
        Multiplier of the file's loads (rib spacing, see the module docstring).

    Returns
    -------
    dict with ``xi`` (fractions), ``shear`` and ``moment`` (the free part's load at each cut),
    and ``reaction_force`` (normal, along the chord) and ``reaction_moment`` at the spar, i.e.
    what the spar must supply to hold the whole rib (the negated total load about the spar).
    """
    x, y, fx, fy = _nodes(body)
    fx, fy = factor * fx, factor * fy
    le = np.asarray(body["leading_edge"], float)
    te = np.asarray(body["trailing_edge"], float)
    chord = float(np.hypot(*(te - le)))
    e = (te - le) / chord  # along the chord
    n = np.array([-e[1], e[0]])  # normal to it, towards the upper side
    xi = ((x - le[0]) * e[0] + (y - le[1]) * e[1]) / chord
    stations = np.asarray(stations, float)
    shear = np.empty(len(stations))
    moment = np.empty(len(stations))
    for j, s in enumerate(stations):
        free = xi < s if s <= spar_fraction else xi > s
        cut = le + s * chord * e
        shear[j] = np.sum(fx[free] * n[0] + fy[free] * n[1])
        moment[j] = nose_up_moment(x[free], y[free], fx[free], fy[free], cut)
    spar = le + spar_fraction * chord * e
    total_n = float(np.sum(fx * n[0] + fy * n[1]))
    total_t = float(np.sum(fx * e[0] + fy * e[1]))
    return {"xi": stations, "shear": shear, "moment": moment, "chord": chord,
            "reaction_force": (-total_n, -total_t),
            "reaction_moment": -nose_up_moment(x, y, fx, fy, spar)}


def rib_peaks(body: dict, spar_fraction: float, factor: float = 1.0) -> dict:
    """Largest |shear| and |bending| of the rib over every cut, the spar included.

    Both diagrams change only where a load node enters the free part, so their extremes lie at
    the nodes' chord positions (taken with the node on either side of the cut) or at the spar
    (taken from the front and from behind): every one of those cuts is evaluated.

    Returns
    -------
    dict with ``shear``, ``shear_at``, ``moment``, ``moment_at`` (magnitudes and chord
    fractions of the cuts where they occur).
    """
    x, y, fx, fy = _nodes(body)
    fx, fy = factor * fx, factor * fy
    le = np.asarray(body["leading_edge"], float)
    te = np.asarray(body["trailing_edge"], float)
    chord = float(np.hypot(*(te - le)))
    e = (te - le) / chord
    n = np.array([-e[1], e[0]])
    xi = ((x - le[0]) * e[0] + (y - le[1]) * e[1]) / chord
    fn = fx * n[0] + fy * n[1]
    best = {"shear": (0.0, spar_fraction), "moment": (0.0, spar_fraction)}
    cuts = np.unique(np.r_[xi[(xi >= 0.0) & (xi <= 1.0)], spar_fraction])
    for s in cuts:
        cut = le + s * chord * e
        ahead = s <= spar_fraction
        for free in ((xi < s, xi <= s) if ahead else (xi > s, xi >= s)):
            if s == spar_fraction and ahead:
                free = xi < s  # the spar from the front (and below, from behind)
            v = abs(float(np.sum(fn[free])))
            m = abs(nose_up_moment(x[free], y[free], fx[free], fy[free], cut))
            if v > best["shear"][0]:
                best["shear"] = (v, float(s))
            if m > best["moment"][0]:
                best["moment"] = (m, float(s))
    cut = le + spar_fraction * chord * e
    behind = xi > spar_fraction
    v = abs(float(np.sum(fn[behind])))
    m = abs(nose_up_moment(x[behind], y[behind], fx[behind], fy[behind], cut))
    if v > best["shear"][0]:
        best["shear"] = (v, spar_fraction)
    if m > best["moment"][0]:
        best["moment"] = (m, spar_fraction)
    return {"shear": best["shear"][0], "shear_at": best["shear"][1],
            "moment": best["moment"][0], "moment_at": best["moment"][1]}


def hinge_moment(body: dict, point, factor: float = 1.0) -> float:
    """Nose-up moment of one body's loads about ``point`` (m): a flap's hinge moment."""
    x, y, fx, fy = _nodes(body)
    return factor * nose_up_moment(x, y, fx, fy, point)


def _point(text: str):
    try:
        x, y = (float(v) for v in text.split(","))
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r}: give X,Y in metres") from None
    return x, y


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description="Rib shear and bending from a panelflow load file.")
    ap.add_argument("loads", help="JSON load file written by 'panelflow loads'")
    ap.add_argument("--body", help="body to treat as the rib (default: the first)")
    ap.add_argument("--spar", type=float, default=0.35,
                    help="spar position, fraction of the body's chord (default 0.35)")
    ap.add_argument("--rib-spacing", type=float, default=1.0,
                    help="span of skin one rib carries, m (default 1)")
    ap.add_argument("--stations", type=int, default=11, help="number of cuts along the chord")
    ap.add_argument("--hinge", type=_point,
                    help="hinge point X,Y in m: moment of the body about it")
    ns = ap.parse_args(argv)
    try:
        data = read_load_file(ns.loads)
        body = find_body(data, ns.body)
    except (OSError, ValueError, KeyError) as exc:
        print(f"structural_example: error: {exc}", file=sys.stderr)
        return 1
    if not (0.0 < ns.spar < 1.0) or ns.rib_spacing <= 0 or ns.stations < 2:
        print("structural_example: error: --spar must lie between 0 and 1, --rib-spacing be "
              "positive and --stations at least 2", file=sys.stderr)
        return 1
    units = data["units"]
    span = data["conditions"]["span"]
    factor = ns.rib_spacing / span if span else ns.rib_spacing
    force_u = "N"
    moment_u = "N m"

    for text in data["cautions"]:
        print(f"caution: {text}")
    print(f"\nresultant check ({units['force']}, {units['moment']}; tolerance "
          f"{CHECK_TOLERANCE:.0e} relative):")
    ok = True
    for key, value, reported, rel in resultant_checks(data):
        good = rel <= CHECK_TOLERANCE
        ok &= good
        print(f"  {key:<34} sum of nodes {value:>14.8g}  reported {reported:>14.8g}  "
              f"rel {rel:.1e}{'' if good else '  MISMATCH'}")
    if not ok:
        print("structural_example: error: the nodal loads do not add up to the reported totals",
              file=sys.stderr)
        return 1

    # the table's stations, with the spar among them
    stations = np.unique(np.r_[np.linspace(0.0, 1.0, ns.stations), ns.spar])
    rib = rib_diagram(body, ns.spar, stations, factor)
    print(f"\nrib of {body['name']!r} (chord {rib['chord']:.4g} m), clamped at the spar at "
          f"{ns.spar:g} c, carrying {ns.rib_spacing:g} m of span:")
    print(f"  {'x/c':>6}  {'shear [' + force_u + ']':>14}  {'bending [' + moment_u + ']':>16}")
    for s, v, m in zip(rib["xi"], rib["shear"], rib["moment"]):
        print(f"  {s:6.3f}  {v + 0.0:14.6g}  {m + 0.0:16.6g}")  # + 0.0: no "-0"
    fn, ft = rib["reaction_force"]
    print(f"  spar reaction: {fn:.6g} {force_u} normal to the chord, {ft:.6g} {force_u} along "
          f"it, {rib['reaction_moment']:.6g} {moment_u} nose-up")
    peaks = rib_peaks(body, ns.spar, factor)
    print(f"  largest |shear| {peaks['shear']:.6g} {force_u} at x/c {peaks['shear_at']:.4f}, "
          f"largest |bending| {peaks['moment']:.6g} {moment_u} at x/c "
          f"{peaks['moment_at']:.4f} (over every load node's station and the spar)")
    flap = data.get("flap_hinge")
    if flap is not None:
        span_m = factor * (span or 1.0)
        print(f"\nflap hinge moment ({'deflected part' if flap['kind'] == 'plain' else 'flap'}"
              f" about ({flap['hinge_point'][0]:.4g}, {flap['hinge_point'][1]:.4g}) m): "
              f"{flap['moment'] * factor:.6g} {moment_u} nose-up for {span_m:g} m of span "
              f"(coefficient {flap['coefficient']:.5f}; positive turns the trailing edge down)")
    if ns.hinge is not None:
        m = hinge_moment(body, ns.hinge, factor)
        print(f"\nhinge moment of {body['name']!r} about ({ns.hinge[0]:g}, {ns.hinge[1]:g}) m: "
              f"{m:.6g} {moment_u} nose-up, for {ns.rib_spacing:g} m of span")
    print("\nThese are unfactored, inviscid, steady loads: apply the design code's safety "
          "factors; final structures need checking under local codes and by licensed practice.")
    return 0


if __name__ == "__main__":
    sys.exit(main())
