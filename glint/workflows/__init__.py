"""Workflows (layer 4): jobs that turn scenes into files.

Each workflow calls the engine for the physics and writes through the io
layer's one output-set writer.
"""
