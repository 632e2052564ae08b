"""Project defaults from ``motorcheck.toml`` in the working directory.

A design office or a permit desk reviews many schedules under the same code
and local amendments; the file saves repeating them on every run::

    [project]
    code = "nec-2023"                     # a ruleset name, or a path to a ruleset file
    amendments = "rules/our-city.toml"    # optional; relative to this file
    assumptions = false                   # false = strict review (nothing unstated is assumed)

Command-line flags override the file. A file that cannot be used raises
:class:`ConfigError` with one line naming the file and the problem; the CLI
turns it into exit code 2. No file means no project defaults.
"""
from __future__ import annotations

import pathlib
import tomllib
from dataclasses import dataclass

CONFIG_NAME = "motorcheck.toml"
_KEYS = {"code": str, "amendments": str, "assumptions": bool}


class ConfigError(Exception):
    """An unusable project file. ``str(e)`` is one line."""


@dataclass(frozen=True, slots=True)
class ProjectConfig:
    """What the project file says; None where it says nothing."""

    code: str | None = None
    amendments: pathlib.Path | None = None
    assumptions: bool | None = None
    path: pathlib.Path | None = None


def load_config(directory: pathlib.Path | None = None) -> ProjectConfig:
    """Read ``motorcheck.toml`` from ``directory`` (default: the working directory)."""
    path = (directory or pathlib.Path.cwd()) / CONFIG_NAME
    if not path.is_file():
        return ProjectConfig()
    try:
        doc = tomllib.loads(path.read_text(encoding="utf-8"))
    except UnicodeDecodeError:
        raise ConfigError(f"{path}: not UTF-8 text") from None
    except tomllib.TOMLDecodeError as exc:
        raise ConfigError(f"{path}: not valid TOML: {' '.join(str(exc).split())}") from None
    except OSError as exc:
        raise ConfigError(f"{path}: cannot read ({exc.strerror or exc})") from None
    extra = sorted(set(doc) - {"project"})
    if extra:
        raise ConfigError(f"{path}: unknown section or key {extra[0]!r}; only [project] is read")
    project = doc.get("project", {})
    if not isinstance(project, dict):
        raise ConfigError(f"{path}: 'project' must be a [project] table")
    for key, value in project.items():
        expected = _KEYS.get(key)
        if expected is None:
            raise ConfigError(f"{path}: unknown key project.{key} (known: {', '.join(_KEYS)})")
        if not isinstance(value, expected) or (expected is str and not value.strip()):
            kind = "true or false" if expected is bool else "non-empty text"
            raise ConfigError(f"{path}: project.{key} must be {kind}, not {value!r}")
    code = project.get("code")
    if code is not None and (code.endswith(".toml") or "/" in code):
        code = str((path.parent / code).resolve())
    amendments = project.get("amendments")
    return ProjectConfig(code=code,
                         amendments=(path.parent / amendments).resolve() if amendments is not None else None,
                         assumptions=project.get("assumptions"), path=path)


def effective_settings(config: ProjectConfig, code: str | None, amendments: pathlib.Path | None,
                       strict: bool | None) -> tuple[str | None, pathlib.Path | None, bool]:
    """(code, amendments, strict) after letting command-line values override the project file.

    ``None`` from the command line means "not given". The code stays None when
    neither says, so that an amendments file can name its own base.
    """
    chosen_strict = strict if strict is not None else (config.assumptions is False)
    return (code if code is not None else config.code,
            amendments if amendments is not None else config.amendments,
            chosen_strict)
