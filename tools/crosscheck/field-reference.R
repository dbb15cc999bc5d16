# field-reference.R -- reference numbers for the field check (issue 22), from R's
# general-purpose glm and the sandwich package. Not run by the tests: its output is
# copied into test/fixtures/field/ (see the README there).
#
#   apt-get install -y r-base-core r-cran-sandwich     # R 4.2.2, sandwich 3.0-2 (Debian bookworm)
#   Rscript tools/crosscheck/field-reference.R test/fixtures/field
#
# It writes:
#   live-rounds.csv    invented live telemetry (per round), seeded below
#   live-attempts.csv  the same rounds expanded to one row per attempt (hits first)
#   field-model.json   the model the "matchmaker" used (fixed coefficients)
#   field_r.csv        dataset,model,quantity,term,value (long format)
#
# Every number is the shortest decimal (15-17 significant digits) that reads back as
# the same IEEE double.

suppressPackageStartupMessages({
  library(stats)
  library(sandwich)
})

args <- commandArgs(trailingOnly = TRUE)
out <- if (length(args) >= 1) args[[1]] else "."

f17 <- function(x) {
  vapply(x, function(v) {
    if (is.na(v)) return("NA")
    for (d in 15:17) {
      s <- sprintf("%.*g", d, v)
      if (as.numeric(s) == v) return(s)
    }
    sprintf("%.17g", v)
  }, "")
}
res_rows <- list()
add <- function(dataset, model, quantity, term, value) {
  res_rows[[length(res_rows) + 1]] <<- data.frame(
    dataset = dataset, model = model, quantity = quantity,
    term = term, value = f17(value), stringsAsFactors = FALSE)
}
tight <- glm.control(epsilon = 1e-14, maxit = 100)

## ---------------------------------------------------------------------------
## Invented live telemetry: 48 players, 8-12 rounds of 20 attempts each.
## ---------------------------------------------------------------------------
set.seed(20260522)
G <- 48L
home <- round(runif(G, 10, 190), 1)
skill <- rnorm(G, 0, 0.25)
rows <- list()
for (g in seq_len(G)) {
  rounds <- 8L + ((g - 1L) %% 5L)
  for (r in seq_len(rounds)) {
    latency <- round(home[g] + rexp(1, 1 / 4), 1)
    difficulty <- if (runif(1) < 0.6) "standard" else "veteran"
    scale <- round(min(1.5, max(1, 1 + 0.0035 * (latency - 25))), 3)
    rows[[length(rows) + 1]] <- data.frame(player = sprintf("p%02d", g), latency_ms = latency,
                                           scale = scale, difficulty = difficulty, attempts = 20L,
                                           stringsAsFactors = FALSE)
  }
}
live <- do.call(rbind, rows)
beta0 <- c(intercept = 0.9, latency = -0.008, log_scale = 1.6, veteran = -0.5, latency_x_log_scale = 0.004)
X <- cbind(1, live$latency_ms, log(live$scale), as.numeric(live$difficulty == "veteran"),
           live$latency_ms * log(live$scale))
colnames(X) <- names(beta0)
eta0 <- drop(X %*% beta0)
## Truth: the model, 25% steeper in latency, plus each player's skill.
truth <- eta0 - 0.25 * 0.008 * live$latency_ms + skill[as.integer(substring(live$player, 2))]
live$hits <- rbinom(nrow(live), live$attempts, plogis(truth))
live <- live[, c("player", "latency_ms", "scale", "difficulty", "hits", "attempts")]

write_data <- function(df, file) {
  o <- df
  for (nm in c("latency_ms", "scale")) o[[nm]] <- f17(o[[nm]])
  write.csv(o, file.path(out, file), row.names = FALSE, quote = FALSE)
}
write_data(live, "live-rounds.csv")
expanded <- live[rep(seq_len(nrow(live)), live$attempts), c("player", "latency_ms", "scale", "difficulty")]
expanded$hit <- unlist(lapply(seq_len(nrow(live)), function(i) c(rep(1L, live$hits[i]), rep(0L, live$attempts[i] - live$hits[i]))))
write_data(expanded, "live-attempts.csv")

cat(sprintf('{
  "format": "lagparity/model@1",
  "label": "field-check reference model (tools/crosscheck/field-reference.R)",
  "family": "binomial",
  "link": "logit",
  "terms": ["intercept", "latency", "log_scale", "difficulty", "latency_x_log_scale"],
  "difficulty": { "kind": "levels", "levels": ["standard", "veteran"], "reference": "standard" },
  "coefficients": {
    "names": ["intercept", "latency", "log_scale", "difficulty[veteran]", "latency_x_log_scale"],
    "estimates": [0.9, -0.008, 1.6, -0.5, 0.004],
    "covariance": [[0.0016, 0, 0, 0, 0], [0, 4e-8, 0, 0, 0], [0, 0, 0.005, 0, 0], [0, 0, 0, 0.0004, 0], [0, 0, 0, 0, 1e-7]],
    "covariance_kind": "model"
  },
  "training": {
    "latency_ms": { "min": 5, "max": 250 },
    "scale": { "min": 1, "max": 2 },
    "difficulty": ["standard", "veteran"],
    "rows": 1000, "attempts": 20000, "players": 40
  },
  "provenance": { "file": "reference-playtest.csv", "rows": 1000, "sha256": "%s" }
}
', strrep("0", 64)), file = file.path(out, "field-model.json"))

## ---------------------------------------------------------------------------
## Fits (grouped rows: n = rounds)
## ---------------------------------------------------------------------------
y <- cbind(live$hits, live$attempts - live$hits)
cluster <- live$player
band_cuts <- c(40, 80, 120, 160, 200)
live$band <- factor(findInterval(live$latency_ms, band_cuts))

## R's vcov(glm) uses the weights of the iteration before the last, and its deviance criterion can
## stop a few 1e-5 standard errors from the MLE on thousands of 0/1 rows (relative errors of about
## 1e-8 in the errors). A second glm call started at the estimate takes every figure at the MLE.
at_mle <- function(fit) update(fit, start = coef(fit))

report_fit <- function(dataset, model, fit, cl) {
  fit <- at_mle(fit)
  V <- vcov(fit)
  VC <- sandwich::vcovCL(fit, cluster = cl, type = "HC1", cadjust = TRUE)
  for (t in names(coef(fit))) {
    add(dataset, model, "estimate", t, coef(fit)[[t]])
    add(dataset, model, "se_model", t, sqrt(V[t, t]))
    add(dataset, model, "se_CR1", t, sqrt(VC[t, t]))
  }
  for (a in rownames(VC)) for (b in colnames(VC)) add(dataset, model, "vcov_CR1", paste0(a, ":", b), VC[a, b])
  add(dataset, model, "deviance", "", deviance(fit))
  add(dataset, model, "null_deviance", "", fit$null.deviance)
  add(dataset, model, "loglik", "", as.numeric(logLik(fit)))
  invisible(VC)
}

## Calibration-in-the-large (Cox 1958): intercept with the model's logit as offset.
citl <- glm(y ~ 1, family = binomial, offset = eta0, control = tight)
report_fit("rounds", "citl", citl, cluster)
## Calibration slope (Cox 1958): logit of observed on the model's logit.
slope <- glm(y ~ eta0, family = binomial, control = tight)
report_fit("rounds", "slope", slope, cluster)
## Residual latency effect: offset, intercept and latency.
linear <- glm(y ~ latency_ms, family = binomial, offset = eta0, data = live, control = tight)
report_fit("rounds", "linear", linear, cluster)
## Bands: offset and one indicator per band with rows.
bands <- at_mle(glm(y ~ 0 + band, family = binomial, offset = eta0, data = live, control = tight))
VB <- report_fit("rounds", "bands", bands, cluster)
## Observed rate per band; each band's rate at the file's difficulty mix (marginal standardisation:
## every row predicted at each difficulty, shifted by the band's gamma, weighted by the file's share of
## attempts at that difficulty) and the gaps of each band to the lowest one, by the delta method on the
## CR1 covariance (by hand in R).
gamma <- coef(bands)
levels_present <- levels(live$band)
eta_at <- function(veteran) drop(cbind(1, live$latency_ms, log(live$scale), veteran, live$latency_ms * log(live$scale)) %*% beta0)
mix <- list(standard = eta_at(0), veteran = eta_at(1))
share <- c(standard = sum(live$attempts[live$difficulty == "standard"]), veteran = sum(live$attempts[live$difficulty == "veteran"])) / sum(live$attempts)
mu <- fitted(bands)
rate <- std_rate <- std_slope <- numeric(length(levels_present))
for (k in seq_along(levels_present)) {
  i <- live$band == levels_present[k]
  n_b <- sum(live$attempts[i])
  rate[k] <- sum(live$hits[i]) / n_b
  for (d in names(mix)) {
    m <- plogis(mix[[d]][i] + gamma[[k]])
    std_rate[k] <- std_rate[k] + share[[d]] * sum(live$attempts[i] * m) / n_b
    std_slope[k] <- std_slope[k] + share[[d]] * sum(live$attempts[i] * m * (1 - m)) / n_b
  }
  add("rounds", "bands", "observed", levels_present[k], rate[k])
  add("rounds", "bands", "fitted_rate", levels_present[k], sum(live$attempts[i] * mu[i]) / n_b)
  add("rounds", "bands", "rate_at_mix", levels_present[k], std_rate[k])
}
for (k in seq_along(levels_present)[-1]) {
  grad <- rep(0, length(levels_present)); grad[k] <- std_slope[k]; grad[1] <- -std_slope[1]
  add("rounds", "bands", "gap_at_mix", levels_present[k], std_rate[k] - std_rate[1])
  add("rounds", "bands", "gap_at_mix_se_CR1", levels_present[k], sqrt(drop(t(grad) %*% VB %*% grad)))
}
## The residual latency trend: generalised least squares of the coefficients of the bands with at
## least 10 players on the bands' attempt-weighted mean latency, with their CR1 covariance (by hand).
mean_latency <- sapply(levels_present, function(b) { i <- live$band == b; sum(live$attempts[i] * live$latency_ms[i]) / sum(live$attempts[i]) })
band_players <- sapply(levels_present, function(b) length(unique(live$player[live$band == b])))
use <- band_players >= 10
Xt <- cbind(1, mean_latency[use])
Vu <- VB[use, use]
A <- t(Xt) %*% solve(Vu) %*% Xt
trend <- solve(A, t(Xt) %*% solve(Vu) %*% gamma[use])
add("rounds", "bands", "trend_per_100ms", "", 100 * trend[2])
add("rounds", "bands", "trend_se_per_100ms", "", 100 * sqrt(solve(A)[2, 2]))

## Refit of the model's terms and the likelihood-ratio test against beta0.
refit <- at_mle(glm(y ~ latency_ms + log(scale) + difficulty + latency_ms:log(scale), family = binomial, data = live, control = tight))
report_fit("rounds", "refit", refit, cluster)
at_beta0 <- glm(y ~ 0, family = binomial, offset = eta0, control = tight)
lr <- deviance(at_beta0) - deviance(refit)
add("rounds", "refit", "deviance_at_model", "", deviance(at_beta0))
add("rounds", "refit", "lr_statistic", "", lr)
add("rounds", "refit", "lr_df", "", length(coef(refit)))
add("rounds", "refit", "lr_p", "", pchisq(lr, length(coef(refit)), lower.tail = FALSE))
## Rao & Scott (1984) adjustment for clustering, by hand: eigenvalues of I V_CR1.
VR <- sandwich::vcovCL(refit, cluster = cluster, type = "HC1", cadjust = TRUE)
delta <- Re(eigen(solve(vcov(refit)) %*% VR, only.values = TRUE)$values)
k <- length(delta)
mean_delta <- mean(delta)
a2 <- sum((delta - mean_delta)^2) / (k * mean_delta^2)
add("rounds", "refit", "rao_scott_mean_eigenvalue", "", mean_delta)
add("rounds", "refit", "rao_scott_a2", "", a2)
add("rounds", "refit", "rao_scott_statistic", "", lr / (mean_delta * (1 + a2)))
add("rounds", "refit", "rao_scott_df", "", k / (1 + a2))
add("rounds", "refit", "rao_scott_p", "", pchisq(lr / (mean_delta * (1 + a2)), k / (1 + a2), lower.tail = FALSE))

## A probit fit with an offset (the IRLS path for links other than logit).
probit_offset <- glm(y ~ latency_ms, family = binomial(link = "probit"), offset = qnorm(plogis(eta0)), data = live, control = tight)
report_fit("rounds", "probit_offset", probit_offset, cluster)
add("rounds", "probit_offset", "offset_first", "", qnorm(plogis(eta0))[1])

## ---------------------------------------------------------------------------
## The same rounds as 0/1 attempts (n = attempts in the CR1 factor)
## ---------------------------------------------------------------------------
ex <- expanded
ex_eta0 <- rep(eta0, live$attempts)
citl_a <- glm(hit ~ 1, family = binomial, offset = ex_eta0, data = ex, control = tight)
report_fit("attempts", "citl", citl_a, ex$player)
ex$eta0 <- ex_eta0
slope_a <- glm(hit ~ eta0, family = binomial, data = ex, control = tight)
report_fit("attempts", "slope", slope_a, ex$player)

res <- do.call(rbind, res_rows)
write.csv(res, file.path(out, "field_r.csv"), row.names = FALSE, quote = FALSE)
cat(sprintf("wrote %d rounds, %d attempts, %d results to %s\n", nrow(live), nrow(ex), nrow(res), out))
