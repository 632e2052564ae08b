"""Helpers shared by the check families: options, number and size formatting.

Nothing here holds a code value; every multiplier and table lives in the ruleset.
"""
from __future__ import annotations

from dataclasses import dataclass

AWG_SIZES = frozenset({"18", "16", "14", "12", "10", "8", "6", "4", "3", "2", "1", "1/0", "2/0", "3/0", "4/0"})
MATERIAL_NAMES = {"cu": "Cu", "al": "Al"}


@dataclass(frozen=True, slots=True)
class ReviewOptions:
    """Choices a reviewer makes for a run.

    strict: when True, a value the schedule leaves out (duty, starting method,
    motor type) makes the check needs-info instead of being assumed.
    """

    strict: bool = False


def num(value: float) -> str:
    """A value as given on the schedule, without trailing zeros (44.0 -> '44', 7.5 -> '7.5')."""
    text = f"{value:.4f}".rstrip("0").rstrip(".")
    return text or "0"


def calc(value: float) -> str:
    """A computed value, one decimal (two below 10 A so small motors stay meaningful)."""
    return f"{value:.2f}" if abs(value) < 10 else f"{value:.1f}"


def size_label(size: str) -> str:
    """'6' -> '#6', '1/0' -> '#1/0', '250' -> '250 kcmil'."""
    return f"#{size}" if size in AWG_SIZES else f"{size} kcmil"


def conductor_label(conductor: dict) -> str:
    sets = conductor.get("sets", 1)
    material = MATERIAL_NAMES.get(conductor.get("material", "cu"), "Cu")
    base = f"{size_label(conductor['size'])} {material}"
    return f"{sets} sets of {base}" if sets > 1 else base
