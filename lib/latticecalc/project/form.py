"""An ipywidgets form that edits a project's ``inputs.toml`` in JupyterLab.

Each declared input gets a field; **Save inputs** validates all changed fields together and
rewrites the file (comments and order kept, atomic). Nothing is written if any value is invalid.
"""

from __future__ import annotations

from typing import Any

from latticecalc.errors import LatticeCalcError
from latticecalc.project.inputs import INPUTS_FILE, set_values
from latticecalc.project.project import Project, open_project


def _raw_text(value: Any) -> str:
    if isinstance(value, list):
        return ", ".join(str(v) for v in value)
    return str(value)


def input_form(project: Project | None = None):
    """Build the form for ``project`` (default: the project of the current folder).

    Returns an ``ipywidgets.VBox``; its ``.fields`` maps input names to widgets, ``.save_button``
    and ``.message`` are exposed for scripted use and tests.
    """
    import ipywidgets as w

    project = project or open_project()
    fields: dict[str, Any] = {}
    rows = []
    for entry in project.inputs.entries():
        spec = entry.spec
        label = w.HTML(f"<code>{spec.name}</code>", layout=w.Layout(width="220px"))
        if spec.kind == "bool":
            field = w.Checkbox(value=bool(entry.value))
        elif spec.kind == "choice":
            field = w.Dropdown(options=list(spec.choices), value=entry.value)
        elif spec.kind == "table":
            continue
        else:
            field = w.Text(value=_raw_text(entry.text), layout=w.Layout(width="180px"))
        field.description_tooltip = spec.expected
        fields[spec.name] = field
        rows.append(w.HBox([label, field, w.HTML(f"<span style='color:#555'>{spec.description}</span>")]))
    message = w.HTML("")
    save = w.Button(description="Save inputs", button_style="primary", icon="save")

    def _convert(name: str, widget: Any) -> Any:
        spec = project.template.spec(name)
        val = widget.value
        if spec.kind == "integer":
            return int(str(val).strip())
        if spec.kind == "number":
            return float(str(val).strip())
        if spec.kind == "quantity-list":
            return [x.strip() for x in str(val).split(",") if x.strip()]
        return val

    def on_save(_button: Any = None) -> None:
        current = {e.spec.name: e for e in project.inputs.entries()}
        changes = {}
        try:
            for name, widget in fields.items():
                new = _convert(name, widget)
                if _raw_text(new) != _raw_text(current[name].text) if not isinstance(new, bool) else \
                        new != current[name].value:
                    changes[name] = new
            if not changes:
                message.value = "<span style='color:#555'>No changes.</span>"
                return
            set_values(project.folder / INPUTS_FILE, project.template, changes)
        except (LatticeCalcError, ValueError) as exc:
            from html import escape

            message.value = f"<span style='color:#b00020'>Not saved: {escape(str(exc))}</span>"
            return
        message.value = (f"<span style='color:#1d6b2a'>Saved {len(changes)} change(s) to {INPUTS_FILE}: "
                         f"{', '.join(changes)}. Rerun the notebooks (Run ▸ Run All Cells).</span>")

    save.on_click(on_save)
    box = w.VBox([*rows, w.HBox([save, message])])
    box.fields = fields
    box.save_button = save
    box.message = message
    box.save = on_save
    return box
