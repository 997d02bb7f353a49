"""Test helper: a design solved with Euler-Bernoulli bending (what first-order sensitivities
and the stacked study solver assemble), whatever the worksheet's default theory."""

from __future__ import annotations

from dataclasses import fields, replace

from beamtone.calc.tolerances import Design

__all__ = ["euler_bernoulli"]


def euler_bernoulli(design: Design) -> Design:
    """``design`` with its member (and so every variation of it) in Euler-Bernoulli bending."""
    member = design.member
    if "theory" not in {f.name for f in fields(member)}:
        return design
    return replace(design, member=replace(member, theory="euler-bernoulli"))
