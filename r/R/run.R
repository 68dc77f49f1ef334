# Running the priorsmith binary: where it is, and errors as R conditions.


priorsmith_binary <- function() {
  opt <- getOption("priorsmith.binary")
  if (!is.null(opt) && nzchar(opt)) return(path.expand(opt))
  env <- Sys.getenv("PRIORSMITH_BIN")
  if (nzchar(env)) return(path.expand(env))
  found <- Sys.which("priorsmith")
  if (nzchar(found)) return(unname(found))
  stop(structure(
    class = c("priorsmith_not_found", "priorsmith_error", "error", "condition"),
    list(
      message = paste(
        "the priorsmith program was not found: set options(priorsmith.binary = \"/path/to/priorsmith\"),",
        "the PRIORSMITH_BIN environment variable, or put priorsmith on the PATH"
      ),
      call = sys.call(-1), exit_code = NA_integer_, stderr = character()
    )
  ))
}

priorsmith_run <- function(args, quiet = TRUE) {
  bin <- priorsmith_binary()
  out <- tempfile("priorsmith-out-")
  err <- tempfile("priorsmith-err-")
  on.exit(unlink(c(out, err)), add = TRUE)
  all_args <- c(if (quiet) "--quiet", args)
  status <- system2(bin, shQuote(all_args), stdout = out, stderr = err)
  stdout <- if (file.exists(out)) readLines(out, warn = FALSE, encoding = "UTF-8") else character()
  stderr <- if (file.exists(err)) readLines(err, warn = FALSE, encoding = "UTF-8") else character()
  if (!identical(as.integer(status), 0L)) {
    msg <- paste(stderr, collapse = "\n")
    msg <- sub("^error: ", "", msg)
    stop(structure(
      class = c("priorsmith_error", "error", "condition"),
      list(
        message = sprintf("priorsmith exited with code %d: %s", as.integer(status), msg),
        call = sys.call(-1), exit_code = as.integer(status), stderr = stderr
      )
    ))
  }
  list(stdout = stdout, stderr = stderr)
}
