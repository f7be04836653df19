"""Jinja2 environments for the note templates, and rendering with errors that name the line.

Templates produce Markdown, so Jinja's HTML autoescaping is off; user text is
escaped for Markdown by the `md` filter instead. Case values reach a template
only as context values, never as template source, so text such as
`{{ 7*7 }}` in a label is printed, not evaluated.

A service's own template runs in Jinja's immutable sandbox: it can read the
context but not reach Python internals or change the values it is given.

The shipped templates alone (not in the sandbox) use the modules compiled when the
wheel was built, when they match (`notegen.render.compiled_templates`).
"""

from __future__ import annotations

import functools
from collections.abc import Mapping, Sequence
from pathlib import Path
from typing import TYPE_CHECKING, Any

from notegen.errors import TemplateError
from notegen.render.filters import format_number, join_words
from notegen.render.markdown_escape import escape_markdown

if TYPE_CHECKING:
    import jinja2

# Errors a template's own expressions can raise (a filter given text where it
# needs a number, an index out of range); they are the template's fault.
_EXPRESSION_ERRORS = (TypeError, ValueError, ArithmeticError, LookupError, AttributeError)


def make_environment(template_dirs: Sequence[Path], *, sandboxed: bool) -> jinja2.Environment:
    """Return the environment for `template_dirs`, searched in order; built once per folder list.

    Strict about undefined names; `None` cannot be printed by accident.
    """
    given = tuple(Path(folder) for folder in template_dirs)
    # Absolute folders are resolved and checked once per process (a note is rendered per case, and
    # that cost several `stat` calls each time); a relative one depends on the working directory.
    folders = _checked(given) if all(folder.is_absolute() for folder in given) else _check(given)
    return _build_environment(folders, sandboxed)


@functools.lru_cache(maxsize=16)
def _checked(folders: tuple[Path, ...]) -> tuple[Path, ...]:
    return _check(folders)  # a missing folder raises, and is not cached


def _check(folders: tuple[Path, ...]) -> tuple[Path, ...]:
    resolved = tuple(folder.resolve() for folder in folders)
    for folder in resolved:
        if not folder.is_dir():
            raise TemplateError("template folder does not exist", template=str(folder))
    return resolved


@functools.lru_cache(maxsize=16)
def _build_environment(folders: tuple[Path, ...], sandboxed: bool) -> jinja2.Environment:
    import jinja2

    from notegen.resources import compiled_templates_dir, templates_dir

    # Only an installed wheel has compiled templates; code compiled outside the sandbox skips the
    # sandbox's own checks of `*` and `**` (jinja2 compiles those operators differently there).
    compiled = None if sandboxed else compiled_templates_dir()
    if compiled is not None and folders == (templates_dir().resolve(),):
        return shipped_environment(folders[0], compiled)
    if sandboxed:  # a service's template: every file it reaches must really lie in the folders
        return new_environment(_contained_loader([str(folder) for folder in folders]), sandboxed=True)
    return new_environment(jinja2.FileSystemLoader([str(folder) for folder in folders]), sandboxed=sandboxed)


def _contained_loader(folders: list[str]) -> jinja2.BaseLoader:
    """A file loader that refuses a template whose real path (links followed) is outside `folders`."""
    import jinja2

    from notegen.render.template_budget import inside_folders, refuse

    class ContainedLoader(jinja2.FileSystemLoader):
        def get_source(self, environment: jinja2.Environment, template: str) -> tuple[str, str, Any]:
            source, filename, uptodate = super().get_source(environment, template)
            if not inside_folders(filename, [Path(folder) for folder in self.searchpath]):
                raise refuse(f"template {template!r} is a link to a file outside the template folders")
            return source, filename, uptodate

    return ContainedLoader(folders)


def shipped_environment(folder: Path, compiled: Path | None) -> jinja2.Environment:
    """The environment of the shipped templates in `folder`, outside the sandbox.

    It loads the modules in `compiled` (built with the wheel) when they were compiled by the running
    jinja2 from these very sources; otherwise, or for a template they lack, it compiles from source.
    """
    import jinja2

    source: jinja2.BaseLoader = jinja2.FileSystemLoader([str(folder)])
    if compiled is None:
        return new_environment(source, sandboxed=False)
    from notegen.render.compiled_templates import compiled_loader

    modules = compiled_loader(folder, compiled)
    loader = source if modules is None else jinja2.ChoiceLoader([modules, source])
    return new_environment(loader, sandboxed=False)


def new_environment(loader: jinja2.BaseLoader, *, sandboxed: bool) -> jinja2.Environment:
    """An environment with the note settings and filters; the wheel's build compiles the shipped templates with it.

    Strict about undefined names; `None` cannot be printed by accident.
    """
    import jinja2

    environment_class: type[jinja2.Environment] = jinja2.Environment
    if sandboxed:
        environment_class = _bounded_sandbox()
    environment = environment_class(
        loader=loader,
        undefined=jinja2.StrictUndefined,
        autoescape=False,
        trim_blocks=True,
        lstrip_blocks=True,
        keep_trailing_newline=True,
        auto_reload=False,
        finalize=_refuse_none,
    )
    environment.filters["md"] = escape_markdown
    environment.filters["fmt"] = format_number
    environment.filters["join_words"] = join_words
    if sandboxed:
        from notegen.render.template_budget import bounded_filters, bounded_lipsum

        environment.filters.update(bounded_filters(environment.filters))
        environment.globals["lipsum"] = bounded_lipsum(environment.globals["lipsum"])  # type: ignore[arg-type]
    return environment


MAX_PRODUCT_LENGTH = 100_000  # a repeated string or list in a service template; a note is a few kilobytes
MAX_EXPONENT = 100


@functools.lru_cache(maxsize=1)
def _bounded_sandbox() -> type[jinja2.Environment]:
    """The immutable sandbox, with `*` and `**` bounded so a template cannot build huge values.

    The sandbox already refuses Python internals and caps `range`; `%`, `+`, `~`, string methods
    and the filters that take widths are bounded by `template_budget`, and the render's size and
    time by `render_template`.
    """
    from jinja2.compiler import CodeGenerator
    from jinja2.exceptions import SecurityError
    from jinja2.sandbox import ImmutableSandboxedEnvironment

    from notegen.render import template_budget as budget

    class BoundedCodeGenerator(CodeGenerator):
        def visit_Concat(self, node: Any, frame: Any) -> None:  # `~`: joined by a checked function
            self.write("environment.bounded_concat((")
            for argument in node.nodes:
                self.visit(argument, frame)
                self.write(", ")
            self.write("))")

    class BoundedSandbox(ImmutableSandboxedEnvironment):
        intercepted_binops = frozenset(["*", "**", "%", "+"])
        code_generator_class = BoundedCodeGenerator
        bounded_concat = staticmethod(budget.bounded_concat)

        def call(__self, __context: Any, __obj: Any, *args: Any, **kwargs: Any) -> Any:  # noqa: N805
            budget.check_call(__obj, args, kwargs)
            return super().call(__context, __obj, *args, **kwargs)

        def call_binop(self, context: Any, operator: str, left: Any, right: Any) -> Any:
            if operator == "%":
                budget.check_percent_format(left)
            sized = (str, list, tuple)
            if operator == "+" and isinstance(left, sized) and isinstance(right, sized):
                if len(left) + len(right) > budget.MAX_VALUE_CHARS:
                    raise SecurityError(f"a value of more than {budget.MAX_VALUE_CHARS:,} characters or items "
                                        "is not allowed in a template")
            if operator == "**" and isinstance(right, int | float) and abs(right) > MAX_EXPONENT:
                raise SecurityError(f"an exponent above {MAX_EXPONENT} is not allowed in a template")
            if operator == "*":
                for sized, count in ((left, right), (right, left)):
                    if isinstance(sized, str | list | tuple) and isinstance(count, int):
                        if len(sized) * count > MAX_PRODUCT_LENGTH:
                            raise SecurityError(
                                f"repeating a value to more than {MAX_PRODUCT_LENGTH:,} items is not allowed"
                            )
            return super().call_binop(context, operator, left, right)

    return BoundedSandbox


def _refuse_none(value: object) -> object:
    if value is None:
        import jinja2

        raise jinja2.TemplateRuntimeError(
            "a printed value is missing (None); test for it with `is none` before printing"
        )
    return value


def render_template(
    env: jinja2.Environment, name_or_path: str | Path, context: Mapping[str, object]
) -> str:
    """Render a template by name, or by a path inside one of `env`'s folders.

    Raises `TemplateError` naming the template file and line for syntax errors,
    undefined names, sandbox refusals and failing expressions.
    """
    import jinja2
    from jinja2.exceptions import SecurityError

    from notegen.render.template_budget import OutOfTime

    name = _template_name(env, name_or_path)
    try:
        return _render(env, name, context)
    except OutOfTime as error:
        message = "the template ran past its time budget (a loop or macro that does not end soon enough)"
        raise _located(message, env, error, name) from None
    except RecursionError as error:
        message = "a template includes, imports, extends or calls itself without end"
        raise _located(message, env, error, name) from None
    except jinja2.TemplateSyntaxError as error:  # in the template or in one it includes
        where = error.filename or error.name or name
        raise TemplateError(f"syntax error: {_message(error)}", template=where, line=error.lineno) from None
    except jinja2.TemplateNotFound as error:
        message = f"template {error.name!r} not found in {_folders_text(env)}"
        raise _located(message, env, error, name) from None
    except SecurityError as error:
        raise _located(f"refused by the sandbox: {_message(error)}", env, error, name) from None
    except jinja2.UndefinedError as error:
        raise _located(f"undefined value: {_message(error)}", env, error, name) from None
    except jinja2.TemplateError as error:
        raise _located(f"cannot render: {_message(error)}", env, error, name) from None
    except _EXPRESSION_ERRORS as error:
        raise _located(f"cannot render: {type(error).__name__}: {error}", env, error, name) from None


def _render(env: jinja2.Environment, name: str, context: Mapping[str, object]) -> str:
    """Render outside the sandbox as jinja does; inside it, piece by piece under the size and time budget."""
    if not getattr(env, "sandboxed", False):
        return env.get_template(name).render(dict(context))
    from jinja2.exceptions import SecurityError

    from notegen.render import template_budget as budget

    pieces: list[str] = []
    size = 0
    with budget.time_budget(budget.RENDER_SECONDS):
        for piece in env.get_template(name).generate(dict(context)):
            size += len(piece)
            if size > budget.MAX_RENDERED_CHARS:
                raise SecurityError(f"the note would be longer than {budget.MAX_RENDERED_CHARS:,} characters")
            pieces.append(piece)
    return "".join(pieces)


def _template_name(env: jinja2.Environment, name_or_path: str | Path) -> str:
    if isinstance(name_or_path, str):
        return name_or_path
    path = name_or_path.resolve()
    for folder in _search_folders(env):
        if path.is_relative_to(folder):
            return path.relative_to(folder).as_posix()
    raise TemplateError(
        f"template file is outside the template folders ({_folders_text(env)})", template=str(name_or_path)
    )


def _search_folders(env: jinja2.Environment) -> list[Path]:
    import jinja2

    loaders = env.loader.loaders if isinstance(env.loader, jinja2.ChoiceLoader) else [env.loader]
    return [Path(f) for loader in loaders if isinstance(loader, jinja2.FileSystemLoader) for f in loader.searchpath]


def _folders_text(env: jinja2.Environment) -> str:
    return ", ".join(str(folder) for folder in _search_folders(env)) or "no folders"


def _located(message: str, env: jinja2.Environment, error: BaseException, name: str) -> TemplateError:
    """A `TemplateError` at the template file and line of the innermost template frame of `error`.

    Jinja rewrites tracebacks so that frames of compiled templates carry the
    template's file name and source line. Those files lie in the environment's
    folders, which tells them apart from Python frames; the innermost one is
    the template that failed, even when another template included it.
    """
    folders = _search_folders(env)
    template: str = name
    line: int | None = None
    trace = error.__traceback__
    while trace is not None:
        frame_file = trace.tb_frame.f_code.co_filename
        if any(Path(frame_file).is_relative_to(folder) for folder in folders):
            template, line = frame_file, trace.tb_lineno
        trace = trace.tb_next
    return TemplateError(message, template=template, line=line)


def _message(error: jinja2.TemplateError) -> str:
    return error.message or type(error).__name__
