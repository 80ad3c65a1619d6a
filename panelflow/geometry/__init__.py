"""Geometry: outlines from files and section specs, checks, flaps, panelling and panels.

The first stage of the flow: text or mesh files and section specs become validated
:class:`~panelflow.geometry.outline.Outline` objects, which are panelled into
:class:`~panelflow.geometry.panels.Panels`. Outlines can be measured and edited into new ones
(:mod:`~panelflow.geometry.measure`, :mod:`~panelflow.geometry.edits`).
"""
