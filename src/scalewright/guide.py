"""The method guide, written as Markdown from the methods' own descriptions.

One source: each method class says what it does, when to use it, what it assumes and how
it reverses (``engine/methods.py``, ``engine/quantile.py``); this module only arranges
those words. The README's "Method guide" section and the window's Help > Method guide
both show ``guide_markdown()``, and the cautions below are also the hints the window shows
where they matter, so the words cannot drift apart.

``python -m scalewright.guide [README.md]`` rewrites the README's section;
``--check`` only says whether it is up to date (exit status 1 when not).
"""

from __future__ import annotations

import sys
from pathlib import Path

from .engine import METHODS
from .engine.method_base import Method

#: The usual cautions, in the words the guide and the window's hints both use.
CAUTION_FIT_ON_TRAINING = (
    "Fit the parameters on the training rows only (Fit on rows where split is train), then "
    "re-apply the saved parameters to new data; never fit them again on new data, or the "
    "same value gets a different scaled value and the model reads it wrongly."
)
CAUTION_CLIPPING = (
    "Clipped values cannot be restored exactly: a value raised or lowered into the fitted "
    "range comes back as the end of that range, not as what it was."
)
CAUTION_SHAPE = (
    "This method changes the shape of the distribution on purpose: the scaled histogram is "
    "not the original one stretched, and distances between values are not kept."
)
CAUTION_KEEP_PROJECT = (
    "Scaled results feed decisions: keep the project file with the model it served, so its "
    "answers can be turned back into original units and the scaling checked later."
)

#: The same cautions, short enough for a hint in the window's narrow method panel (the
#: whole caution is the hint's tooltip).
HINT_FIT_ON_TRAINING = (
    "Learn from the training rows only; new files get these saved values, never a new fit."
)
HINT_SHAPE = "It changes the shape of the values on purpose (hover for more)."

BEGIN_MARK = (
    "<!-- method guide: written by `python -m scalewright.guide`; edit the methods, not this -->"
)
END_MARK = "<!-- end of method guide -->"


def _options_words(method: Method) -> list[str]:
    words = []
    for spec in method.option_specs:
        default = spec.default
        if isinstance(default, bool):
            default = "yes" if default else "no"
        elif isinstance(default, float):
            default = f"{default:g}"
        choices = (
            " (choices: " + ", ".join(f"`{c}`" for c in spec.choices) + ")" if spec.choices else ""
        )
        words.append(
            f"*{spec.shown_label}* (`{spec.name}`, default `{default}`): {spec.help}{choices}"
        )
    return words


def _param_words(spec) -> str:
    """A kept parameter in the guide: its name in the project, then what it is."""
    notes = [spec.label] if spec.label != spec.name else []
    if spec.absent_when:
        notes.append("not kept when " + spec.absent_when)
    return f"`{spec.name}`" + (f" ({'; '.join(notes)})" if notes else "")


def method_section(method: Method, level: int = 3) -> str:
    """One method's part of the guide."""
    lines = [f"{'#' * level} {method.name} (`{method.id}`)", ""]
    lines.append(f"- **What it does:** {method.summary}")
    if method.changes_shape:
        lines.append(f"  {CAUTION_SHAPE}")
    lines.append(f"- **When to use it:** {method.when_to_use}")
    lines.append(f"- **What it assumes:** {method.assumes}")
    lines.append(f"- **How it reverses:** {method.reverses} By hand: `{method.inverse_formula}`")
    params = ", ".join(_param_words(p) for p in method.param_specs)
    if params:
        lines.append(f"- **Kept in the project:** {params}")
    options = _options_words(method)
    if options:
        lines.append("- **Options:** " + "; ".join(options))
        lines.append(f"  On the command line: `-m 'COLUMN={method.options_example()}'`")
    else:
        lines.append(f"- **On the command line:** `-m 'COLUMN={method.id}'`")
    return "\n".join(lines)


def _and_list(words: list[str]) -> str:
    return words[0] if len(words) == 1 else ", ".join(words[:-1]) + " and " + words[-1]


def _capitalized(text: str) -> str:
    return text[:1].upper() + text[1:]


def shape_caution() -> str:
    """Which methods change the shape and which only move and stretch it, from the methods'
    own ``changes_shape`` and ``linear`` (the guide's third caution, and the report's)."""
    shaped = [m.name for m in METHODS.values() if m.changes_shape]
    straight = [m.name for m in METHODS.values() if m.linear and m.param_specs]
    return (
        f"{_capitalized(_and_list(shaped))} change the shape of the distribution on purpose; "
        f"the straight-line methods ({', '.join(straight)}) only move and stretch it."
    )


def methods_table() -> str:
    """One row a method: its name, its command-line id, what it does and what the project
    keeps, as a Markdown table (the guide's overview)."""
    rows = [
        "| method | on the command line | what it does | shape | kept in the project |",
        "|---|---|---|---|---|",
    ]
    for method in METHODS.values():
        shape = "changed" if method.changes_shape else "kept"
        kept = ", ".join(f"`{p.name}`" for p in method.param_specs) or "nothing"
        summary = method.summary.replace("|", "\\|")
        rows.append(f"| {method.name} | `{method.id}` | {summary} | {shape} | {kept} |")
    return "\n".join(rows)


def guide_markdown(level: int = 3) -> str:
    """The whole method guide: the cautions, then every method in the registry's order.
    ``level`` is the heading level of each method (3 under the README's ``##``)."""
    parts = [
        "Every method is fitted on some rows of a column (its parameters are learned from "
        "them), kept in the project file, and used unchanged on every row and on every "
        "later file. Every method keeps the order of the values, so a scaled value can be "
        "turned back into original units. Four things to keep in mind:",
        "",
        f"1. {CAUTION_FIT_ON_TRAINING}",
        f"2. {CAUTION_CLIPPING}",
        f"3. {shape_caution()}",
        f"4. {CAUTION_KEEP_PROJECT}",
        "",
        "Missing values are left out of the fit and stay missing.",
        "",
        methods_table(),
    ]
    for method in METHODS.values():
        parts += ["", method_section(method, level)]
    return "\n".join(parts) + "\n"


def replace_section(readme: str, guide: str | None = None) -> str:
    """``readme`` with the text between the guide's marks replaced by the guide."""
    guide = guide_markdown() if guide is None else guide
    try:
        start = readme.index(BEGIN_MARK) + len(BEGIN_MARK)
        end = readme.index(END_MARK, start)
    except ValueError:
        raise ValueError(
            f"the README has no method guide section (between {BEGIN_MARK!r} and {END_MARK!r})"
        ) from None
    return readme[:start] + "\n\n" + guide + "\n" + readme[end:]


def current_section(readme: str) -> str:
    """The text between the guide's marks, as ``replace_section`` writes it."""
    start = readme.index(BEGIN_MARK) + len(BEGIN_MARK)
    end = readme.index(END_MARK, start)
    return readme[start:end]


def main(argv: list[str] | None = None) -> int:
    args = list(sys.argv[1:] if argv is None else argv)
    check = "--check" in args
    paths = [a for a in args if a != "--check"]
    readme = Path(paths[0]) if paths else Path(__file__).resolve().parents[2] / "README.md"
    text = readme.read_text(encoding="utf-8")
    new = replace_section(text)
    if new == text:
        print(f"{readme}: the method guide is up to date")
        return 0
    if check:
        print(f"{readme}: the method guide is out of date; run python -m scalewright.guide")
        return 1
    readme.write_text(new, encoding="utf-8")
    print(f"{readme}: method guide rewritten")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
