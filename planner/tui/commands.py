"""The command palette's entries, generated from the action table."""

from __future__ import annotations

from functools import partial

from textual.command import DiscoveryHit, Hit, Hits, Provider

from planner.tui.actions import ACTIONS, Action, key_label, scope_of


def _usable(action: Action, scope: str | None) -> bool:
    return scope in action.scopes and action.id != "command_palette"


class ActionCommands(Provider):
    """Every action that applies to the screen the palette was opened from: the app's, and
    the screen's own (`target="screen"`, e.g. the week view's)."""

    def _actions(self) -> list[Action]:
        scope = scope_of(self.screen)
        return [a for a in ACTIONS if _usable(a, scope)]

    def _run(self, action: Action) -> partial:
        target = self.screen if action.target == "screen" else self.app
        return partial(target.run_action, action.id)

    def _help(self, action: Action) -> str:
        return f"{key_label(action.keys)} · {action.help}"

    async def search(self, query: str) -> Hits:
        matcher = self.matcher(query)
        for action in self._actions():
            words = f"{action.title.capitalize()} ({action.group.lower()})"
            score = max(matcher.match(words), matcher.match(action.help) * 0.8)
            if score > 0:
                yield Hit(score, matcher.highlight(words),
                          self._run(action), text=words,
                          help=self._help(action))

    async def discover(self) -> Hits:
        for action in self._actions():
            words = f"{action.title.capitalize()} ({action.group.lower()})"
            yield DiscoveryHit(words, self._run(action), text=words,
                               help=self._help(action))
