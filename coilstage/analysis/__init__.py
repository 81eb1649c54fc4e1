"""Turns a Drawing into physics inputs and runs the operating corners; returns plain results."""
