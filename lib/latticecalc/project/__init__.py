"""Project folders: inputs, templates, headless runs, export, sign-off.

``Project`` and ``open_project`` load on first use (PEP 562): the command line imports this package
for its sub-commands without paying for pint.
"""

__all__ = ["Project", "open_project"]


def __getattr__(name: str):
    if name in __all__:
        from latticecalc.project import project

        value = globals()[name] = getattr(project, name)
        return value
    raise AttributeError(f"module 'latticecalc.project' has no attribute {name!r}")
