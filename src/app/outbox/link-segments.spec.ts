import { linkSegments } from './link-segments';

describe('linkSegments', () => {
  it('turns http(s) addresses into links and keeps the text around them', () => {
    const segments = linkSegments('Join here: http://127.0.0.1:8640/invitation?token=abc.\nThanks');
    expect(segments).toEqual([
      { text: 'Join here: ' },
      { text: 'http://127.0.0.1:8640/invitation?token=abc', href: 'http://127.0.0.1:8640/invitation?token=abc' },
      { text: '.\nThanks' },
    ]);
  });

  it('never makes a link of other schemes', () => {
    const segments = linkSegments('javascript:alert(1) and mailto:x@y.example');
    expect(segments.every((s) => s.href === undefined)).toBe(true);
    expect(segments.map((s) => s.text).join('')).toBe('javascript:alert(1) and mailto:x@y.example');
  });

  it('returns the text whole when there is no address', () => {
    expect(linkSegments('no links')).toEqual([{ text: 'no links' }]);
    expect(linkSegments('')).toEqual([]);
  });
});
