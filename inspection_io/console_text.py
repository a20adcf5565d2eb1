"""Text from files made safe for a console and for error messages.

Two jobs, both about user text (cells, headers, zone names, folder paths) that
ends up on the engineer's screen:

- `escape_markup`: the CLI prints through rich, whose console markup reads
  ``[bold]``, ``[/x]`` ... as style tags. A cell holding ``[/x]`` makes rich's
  markup parser raise, and ``'diameter [unit]'`` loses its ``[unit]``. Every
  user-derived text printed with markup must pass through `escape_markup` first
  (rich's own rule, a backslash before each tag-like ``[...]``, made exact for
  backslashes before other ``[`` and at the end of the text).
- `quote_cell`: how a cell is shown inside a message: control characters
  (NUL, escape sequences, line breaks) as visible ``\\xNN`` escapes and long
  cells cut to a head with their length stated, so a 5 MB cell never becomes a
  5 MB message.
"""

from __future__ import annotations

import re

__all__ = ["CELL_PREVIEW_CHARS", "escape_markup", "quote_cell"]

#: Characters of a cell shown in a message before it is cut [-].
CELL_PREVIEW_CHARS = 40

# the tag pattern of rich's markup parser (rich.markup.RE_TAGS): "[" + a letter,
# "#", "/" or "@" + anything up to the next "]" without another "["
_RUN = re.compile(r"(\\*)(\[[a-z#/@][^[]*?]|\[|\Z)")
_CONTROL = re.compile(r"[\x00-\x1f\x7f-\x9f\u2028\u2029\u200b-\u200f\u202a-\u202e\u2066-\u2069]")


def escape_markup(text: str) -> str:
    """Escape `text` so that rich console markup shows it literally.

    Rules, from rich's markup parser (``rich.markup``): a run of backslashes
    before a tag-like ``[...]`` is doubled and one more backslash escapes the
    tag (as ``rich.markup.escape`` does); a run of backslashes before any other
    ``[`` gets one more backslash (rich turns ``\\[`` into ``[`` in plain
    text); a run of backslashes at the end is doubled, so that a tag placed
    after the text stays a tag (rich's escape only handles a single one).

    Parameters
    ----------
    text : str
        Any text: a message, a cell, a header, a zone name, a path.

    Returns
    -------
    str
        Text that ``rich.markup.render`` turns back into `text` when a tag
        follows it (``f"[bold]{escape_markup(t)}[/bold]"``); followed by plain
        text or nothing, a trailing run of backslashes shows doubled.
        Emoji codes such as ``:fire:`` are not markup tags: print user text with
        ``emoji=False`` (or as a ``rich.text.Text``) to keep them as written.
    """

    def _escape(match: re.Match) -> str:
        backslashes, what = match.groups()
        if not what:                        # end of text
            return backslashes * 2
        if what == "[":                     # a "[" that does not start a tag
            return backslashes + ("\\" if backslashes else "") + "["
        return f"{backslashes}{backslashes}\\{what}"

    return _RUN.sub(_escape, str(text))


def quote_cell(text: object, limit: int = CELL_PREVIEW_CHARS) -> str:
    """A cell as shown inside a message: control characters visible, long text cut.

    Parameters
    ----------
    text : object
        The cell (converted with ``str``).
    limit : int
        Characters shown at most before the cut [-].

    Returns
    -------
    str
        ``"abc"`` -> ``"abc"``; ``"a\\x00b"`` -> ``"a\\\\x00b"``; a 200 000
        character cell -> its first `limit` characters, ``"..."`` and
        ``"(200000 characters)"``.
    """
    text = str(text)
    head = text[:limit]
    shown = _CONTROL.sub(lambda m: f"\\x{ord(m.group()):02x}" if ord(m.group()) < 0x100
                         else f"\\u{ord(m.group()):04x}", head)
    if len(text) > limit:
        shown += f"... ({len(text)} characters)"
    return shown
