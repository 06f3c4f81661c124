import { studyRequestSchema } from '../../../shared/api/studies';
import { type StudyFormValue, studyRequest } from './study-request';

const base: StudyFormValue = {
  kind: 'sweep',
  modelId: '5f0c1f3e-2d4a-4b6c-8e9f-0a1b2c3d4e5f',
  version: 2,
  name: '',
  window: { emin: 1, emax: 10, gammaMax: 1 },
  sweep: { path: 'field', values: '0:1:3' },
  ensemble: {
    realisations: 20,
    seed: 7,
    rmsNm: 2,
    correlationNm: 20,
    disorder: false,
    follow: 3.1,
    jitter: [],
    tolerances: { energyMin: null, energyMax: null, widthMin: null, widthMax: null, qualityMin: null, qualityMax: null },
  },
};

describe('studyRequest', () => {
  it('builds a sweep request the shared schema accepts', () => {
    const built = studyRequest(base);
    expect(built).toEqual({
      request: {
        kind: 'sweep',
        modelId: base.modelId,
        version: 2,
        window: { emin: 1, emax: 10, gammaMax: 1 },
        parameters: [{ path: 'field', values: { from: 0, to: 1, count: 3 } }],
      },
    });
    expect(studyRequestSchema.safeParse((built as { request: unknown }).request).success).toBe(true);
  });

  it('builds an ensemble request with roughness, a jitter and one-sided tolerances', () => {
    const built = studyRequest({
      ...base,
      kind: 'ensemble',
      ensemble: {
        ...base.ensemble,
        jitter: [{ kind: 'dimension', path: 'shape.radius', sigma: 1.5 }],
        tolerances: { ...base.ensemble.tolerances, energyMin: 3, energyMax: 3.2, qualityMin: 20 },
      },
    });
    const request = (built as { request: Record<string, unknown> }).request;
    expect(request).toMatchObject({
      kind: 'ensemble',
      realisations: 20,
      seed: 7,
      roughness: { rmsNm: 2, correlationNm: 20 },
      jitter: [{ kind: 'dimension', path: 'shape.radius', sigma: 1.5 }],
      follow: { energy: 3.1 },
      tolerances: { energy: { min: 3, max: 3.2 }, quality: { min: 20 } },
    });
    expect((request['tolerances'] as Record<string, unknown>)['width']).toBeUndefined();
    expect(studyRequestSchema.safeParse(request).success).toBe(true);
  });

  it('names the field that is missing or wrong', () => {
    expect(studyRequest({ ...base, modelId: '' })).toMatchObject({ path: 'modelId' });
    expect(studyRequest({ ...base, window: { emin: 5, emax: 2, gammaMax: 1 } })).toMatchObject({ path: 'window.emax' });
    expect(studyRequest({ ...base, sweep: { path: 'field', values: '0:1' } })).toMatchObject({ path: 'sweep.values' });
    expect(studyRequest({ ...base, kind: 'ensemble', ensemble: { ...base.ensemble, follow: null } })).toMatchObject({ path: 'ensemble.follow' });
    expect(studyRequest({ ...base, kind: 'ensemble', ensemble: { ...base.ensemble, correlationNm: null } })).toMatchObject({ path: 'ensemble.rmsNm' });
  });
});
