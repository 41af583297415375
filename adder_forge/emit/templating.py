"""Jinja2 environment over the templates: adder_forge/templates in an installed package, or the
repository's top-level templates/ when the package is imported from a source checkout."""

from __future__ import annotations

from functools import lru_cache
from importlib import resources
from pathlib import Path

import jinja2


def template_root():
    try:
        root = resources.files("adder_forge.templates")
        if (root / "module.v.j2").is_file():
            return root
    except ModuleNotFoundError:
        pass
    return Path(__file__).resolve().parents[2] / "templates"


@lru_cache(maxsize=None)
def env() -> jinja2.Environment:
    root = template_root()
    return jinja2.Environment(
        loader=jinja2.FunctionLoader(lambda name: (root / name).read_text(encoding="utf-8")),
        undefined=jinja2.StrictUndefined,
        keep_trailing_newline=True,
        autoescape=False,
    )


def render(template: str, **context) -> str:
    return env().get_template(template).render(**context)
