"""Sections of ``redcorr demo``, one module each, run in the order of their names.

A section module is named ``sNN_topic.py`` and defines
``section(scenario: dict, demo_dir: pathlib.Path) -> None``, which prints one
part of the story using the library (never computing anything itself).
"""
