/**
 * The scale each latency needs, for the report's chart of where compensation
 * stops: at every latency from the fastest trained latency to past the
 * eligibility limit, the scale that brings a player at that latency up to
 * the target (the model inverted in closed form: the scale term
 * t = (link(T) - a0 - a1 L) / (b0 + b1 L), method.md section 2), and the
 * scale the rules grant such a player, taken from the solver itself: a lobby
 * of that player and a best-connected player at the fastest trained latency,
 * solved under the rules without the ratio limit and the budget (which
 * couple players and depend on the lobby).
 */
import type { CompiledModel } from '../model/compile.js';
import { balanceLobby } from '../solver/balance-lobby.js';
import { type CompiledRules, compileRules } from '../solver/rules.js';
import { type ScaleForm, scaleOf } from '../solver/player-ceilings.js';

export interface ScaleNeededPoint {
  readonly latency: number;
  /** The scale that reaches the target, uncapped; null where no scale does (or past the drawing's top). */
  readonly needed: number | null;
  /** The scale the rules grant; null for an ineligible player (above the latency limit). */
  readonly granted: number | null;
}

export interface ScaleNeeded {
  readonly difficulty: number | string;
  readonly target: number;
  readonly points: readonly ScaleNeededPoint[];
}

const POINTS = 121;

/** The curve for one difficulty; null when the model cannot be solved there (no scale term, unknown level). */
export function scaleNeeded(model: CompiledModel, rules: CompiledRules, difficulty: number | string): ScaleNeeded | null {
  if (model.scaleForm === 'none') return null;
  const form: ScaleForm = model.scaleForm;
  const line = model.lineAt(difficulty);
  if (!line.ok) return null;
  const { base, basePerMs, scaleSlope, scaleSlopePerMs } = line.value;
  const fastest = model.training.latency_ms.min;
  const limit = rules.latency_limit_ms;
  const last = Math.max(model.training.latency_ms.max, limit === null ? 0 : limit * 1.15);
  const perPlayer = compileRules({ ...rules, max_scale_ratio: null, assistance_budget: null });
  if (!perPlayer.ok) return null;
  const lobbyAt = (latency: number) => ({
    format: 'lagparity/lobby@1' as const,
    match_id: 'scale-needed',
    attribute: 'hit_area' as const,
    difficulty,
    players: [
      { id: 'best-connected', latency_ms: fastest },
      { id: 'player', latency_ms: latency },
    ],
  });
  const first = balanceLobby(lobbyAt(fastest), model, perPlayer.value);
  if (first.status === 'rejected') return null;
  const target = first.target;
  const linkedTarget = model.link.link(target);
  const top = 2 * rules.scale_cap;
  const points: ScaleNeededPoint[] = [];
  for (let step = 0; step < POINTS; step += 1) {
    const latency = fastest + ((last - fastest) * step) / (POINTS - 1);
    const slope = scaleSlope + scaleSlopePerMs * latency;
    const term = slope > 0 ? (linkedTarget - base - basePerMs * latency) / slope : Number.NaN;
    const raw = Number.isFinite(term) ? scaleOf(form, term) : Number.NaN;
    const needed = Number.isFinite(raw) && raw <= top ? Math.max(raw, rules.scale_floor) : null;
    const result = balanceLobby(lobbyAt(latency), model, perPlayer.value);
    const player = result.status === 'rejected' ? undefined : result.players[1];
    points.push({ latency, needed, granted: player === undefined || !player.eligible ? null : player.scale });
  }
  return { difficulty, target, points };
}
