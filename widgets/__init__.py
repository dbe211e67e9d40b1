"""eaveline's Jupyter front end (ipywidgets 8 and bqplot).

The widgets observe a project and the core's results and render them; they never compute
physics. :class:`Planner` is the composite planner (plan, side panel, sky chart, heat map,
timeline, files, cautions), :class:`SurveyPanel` its Survey tab (field readings with their
tolerances, the surveyed list, a CSV import);
``python -m widgets`` serves the planner as a web app with Voila.
"""

from .charts import HoursHeatMap
from .forms import ObstructionForm
from .plan_view import PlanView
from .planner import Planner
from .sky_chart import SkyChart
from .survey_panel import SurveyPanel
from .timeline import Timeline

__all__ = ["HoursHeatMap", "ObstructionForm", "PlanView", "Planner", "SkyChart", "SurveyPanel",
           "Timeline"]
