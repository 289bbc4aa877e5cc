"""Marking worked sight reductions: the tables' reference chain, sheets, diagnosis, reports.

- :mod:`.tables`     the almanac and the altitude corrections worked the tables' way (0.1′,
                     hour value plus increment, v and d; the main-correction grouping)
- :mod:`.triangle`   Hc, Z from the elevated pole, the Z→Zn rule, the intercept
- :mod:`.sheet`      the worked-sheet CSV contract: its columns, cells and fixes file
- :mod:`.reference`  a sheet worked from an exercise (tables' way or exact), slips planted on demand
- :mod:`.diagnose`   every figure checked twice, the three chains, the slip named
- :mod:`.fixes`      the students' fixes checked against their own lines
- :mod:`.report`     the class summary, text and JSON-ready dicts
- :mod:`.exercise`   seeded exercises with their answer keys and truth
- :mod:`.worksheet`  the reduction as text, in the order it is worked on paper

The core modules never print or touch the disk; the commands in
:mod:`nav.commands.marking_cmd` read and write the files.
"""
