"""Command-line commands that live in their own modules.

Each module defines typer commands on :data:`lowenergy.cli.app` (importing
``app`` and ``user_errors`` from :mod:`lowenergy.cli`); ``_registry`` imports
them all so that ``lowenergy.cli`` registers every command on import.
"""
