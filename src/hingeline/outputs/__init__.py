"""What a solve leaves behind: result.json, the drawings and the calculation record.

result_json (the result as JSON and the files of an output folder) -> plots (the public
face of the drawings: drawing, the shared figure set-up and caution footer -> plan, the plan
of the yield-line pattern -> contours, deflection contours and utilisation of the lower
bound) -> record (the self-contained HTML calculation record, rendered by Jinja2 from
templates/; record_model and record_tables prepare the values of its sections).
Units as in the result: m, kN, kNm/m, kPa. Plots use matplotlib's Agg canvas only.
May import: everything upstream (`model`, `geometry`, `upper`, `lower`, `result`, `solve`).
Imported only when files are written, so reading a model stays light.
"""
