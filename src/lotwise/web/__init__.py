"""``lotwise serve``: a local web page for negotiation meetings and plan
reviews, and the JSON API behind it (:mod:`lotwise.web.app`).

The API answers with exactly what the command line's ``--json`` prints for
the same options (:mod:`lotwise.web.commands`, :mod:`lotwise.web.plans`);
the page (``static/``) is plain HTML, CSS and JavaScript shipped inside the
package. This layer sits below the command line: it imports the library,
never :mod:`lotwise.cli`.
"""
