import { stageInWords } from './stage-words';

describe('stageInWords', () => {
  it('puts the engine and worker stage names into plain words', () => {
    expect(stageInWords('contour', 'running')).toBe('searching the contour');
    expect(stageInWords('refine', 'running')).toBe('refining poles');
    expect(stageInWords('transmission', 'running')).toBe('transmission spectrum');
    expect(stageInWords('waiting for another worker', 'queued')).toContain('previous one stopped');
    expect(stageInWords('queued', 'queued')).toBe('waiting in the queue');
  });

  it('falls back to the raw name, and to the status when there is no stage', () => {
    expect(stageInWords('lanczos sweep 3', 'running')).toBe('lanczos sweep 3');
    expect(stageInWords(null, 'queued')).toBe('waiting in the queue');
    expect(stageInWords(undefined, 'running')).toBe('starting');
    expect(stageInWords('  ', 'running')).toBe('starting');
  });
});
