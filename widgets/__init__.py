"""eaveline's Jupyter front end (ipywidgets 8 and bqplot).

The widgets observe a project and the core's analysis and render them; they never compute
physics. The planner arrives with the front-end work; until then this package is empty.
"""
