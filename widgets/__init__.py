"""eaveline's Jupyter front end (ipywidgets 8 and bqplot).

The widgets observe a project and the core's results and render them; they never compute
physics. :class:`Planner` is the composite planner (plan, side panel, sky chart, heat map,
timeline, files, cautions);
``python -m widgets`` serves it as a web app with Voila.
"""

from .charts import HoursHeatMap
from .forms import ObstructionForm
from .plan_view import PlanView
from .planner import Planner
from .sky_chart import SkyChart
from .timeline import Timeline

__all__ = ["HoursHeatMap", "ObstructionForm", "PlanView", "Planner", "SkyChart", "Timeline"]
