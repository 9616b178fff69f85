"""The user's edge: design files and their schema, the built-in demo, output files, the
HTML report and its figures, and the command line.

Values arrive here in engineering notation and °C and leave as SI objects; results leave
as text, JSON, CSV, PNG and HTML, written atomically and never over a user's file. May
import everything below it; nothing imports it.
"""
