"""The sub-commands of ``legbridge``, one module each (see limits/cli.py)."""
