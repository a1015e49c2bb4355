"""Project folders: inputs, templates, headless runs, export, sign-off."""

from latticecalc.project.project import Project, open_project

__all__ = ["Project", "open_project"]
