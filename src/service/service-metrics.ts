/**
 * The service's Prometheus metrics (text exposition format, from prom-client):
 * requests by route, method and status, a request-duration histogram by
 * route, the model reloads by result, and the process's own figures (memory,
 * CPU, event-loop lag) under the `lagparity_` prefix.
 */
import { Counter, Histogram, Registry, collectDefaultMetrics } from 'prom-client';

export interface ServiceMetrics {
  readonly registry: Registry;
  readonly requests: Counter<'route' | 'method' | 'status'>;
  readonly duration: Histogram<'route'>;
  readonly reloads: Counter<'result'>;
}

export function createMetrics(): ServiceMetrics {
  const registry = new Registry();
  collectDefaultMetrics({ register: registry, prefix: 'lagparity_' });
  return {
    registry,
    requests: new Counter({ name: 'lagparity_http_requests_total', help: 'HTTP requests answered, by route, method and status.', labelNames: ['route', 'method', 'status'], registers: [registry] }),
    duration: new Histogram({
      name: 'lagparity_http_request_duration_seconds',
      help: 'Time from receiving a request to sending its answer, by route.',
      labelNames: ['route'],
      // A 10-player balance takes tens of microseconds; a 256-player audit with samples, seconds.
      buckets: [0.0001, 0.00025, 0.0005, 0.001, 0.0025, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1, 2.5, 5],
      registers: [registry],
    }),
    reloads: new Counter({ name: 'lagparity_model_reloads_total', help: 'Model reloads on SIGHUP, by result (loaded or kept_old).', labelNames: ['result'], registers: [registry] }),
  };
}
