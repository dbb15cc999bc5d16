import { describe, expect, it } from 'vitest';
import { prefixSvgIds, renderChartSvg } from '../../src/report/render-svg.js';

describe('prefixSvgIds()', () => {
  it('renames ids in order of appearance and follows every reference', () => {
    const svg = '<svg><defs><clipPath id="clip7"><rect/></clipPath><linearGradient id="g"/></defs><g clip-path="url(#clip7)"><use href="#g"/><use xlink:href="#g"/></g></svg>';
    expect(prefixSvgIds(svg, 'box')).toBe(
      '<svg><defs><clipPath id="box-1"><rect/></clipPath><linearGradient id="box-2"/></defs><g clip-path="url(#box-1)"><use href="#box-2"/><use xlink:href="#box-2"/></g></svg>',
    );
  });
});

describe('renderChartSvg()', () => {
  const spec = {
    width: 200,
    height: 100,
    data: { values: [{ a: 1, b: 0.2 }, { a: 2, b: 0.6 }, { a: 3, b: 0.4 }] },
    mark: { type: 'line' as const, clip: true },
    encoding: { x: { field: 'a', type: 'quantitative' as const, title: 'A (ms)' }, y: { field: 'b', type: 'quantitative' as const, title: 'B' } },
  };

  it('renders a standalone SVG with the marks and axis titles, and no messages', async () => {
    const rendered = await renderChartSvg(spec, 'chart');
    expect(rendered.svg.startsWith('<svg')).toBe(true);
    expect(rendered.svg).toContain('mark-line');
    expect(rendered.svg).toContain('A (ms)');
    expect(rendered.messages).toEqual([]);
  });

  it('gives the same SVG on every call (ids do not depend on earlier charts)', async () => {
    const first = await renderChartSvg(spec, 'chart');
    const second = await renderChartSvg(spec, 'chart');
    expect(second.svg).toBe(first.svg);
    expect(first.svg).toContain('id="chart-1"');
  });

  it('loads nothing from outside: a data URL fails to load, with a message', async () => {
    const rendered = await renderChartSvg({ ...spec, data: { url: 'https://example.invalid/data.json' } }, 'chart');
    expect(rendered.messages.join('\n')).toContain('loads nothing from outside');
  });
});
