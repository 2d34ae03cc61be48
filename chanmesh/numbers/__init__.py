"""Design numbers: is a channel in the working regime at a given flow, before it is meshed?

``design_numbers(design, flow)`` returns hydraulic diameter, Reynolds and Dean numbers along
the path, secondary-flow velocity, particle focusing estimates, pressure drop and fluid
properties as a JSON-able dict in SI units.
"""

from chanmesh.numbers.report import design_numbers
from chanmesh.numbers.text import render, write_json

__all__ = ["design_numbers", "render", "write_json"]
