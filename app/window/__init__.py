"""The main window: panes, the figures table, field binding, comparison state, edit history and files."""
