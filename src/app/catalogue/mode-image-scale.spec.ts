import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { settle } from '../core/testing/next-request';
import { sampleModelVersion } from '../core/testing/answer-fixtures';
import { ModeImageScale } from './mode-image-scale';

describe('ModeImageScale', () => {
  it('draws a round length as its share of the image width (nx·a)', async () => {
    TestBed.configureTestingModule({ providers: [provideHttpClient(), provideHttpClientTesting()] });
    const fixture = TestBed.createComponent(ModeImageScale);
    fixture.componentRef.setInput('groupId', 'g1');
    fixture.componentRef.setInput('modelId', 'm1');
    fixture.componentRef.setInput('version', 2);
    fixture.detectChanges();
    await settle();
    // 60 columns at a = 5 nm: a 300 nm wide image; the bar is 50 nm, a sixth of it.
    TestBed.inject(HttpTestingController).expectOne('/api/groups/g1/models/m1/versions/2').flush(sampleModelVersion());
    fixture.detectChanges();
    const host = fixture.nativeElement as HTMLElement;
    expect(host.textContent).toContain('50 nm · image 300 nm wide');
    const bar = host.querySelector<HTMLElement>('.bar')!;
    expect(parseFloat(bar.style.width)).toBeCloseTo(100 / 6, 6);
  });

  it('speaks millimetres for a microwave resonator', async () => {
    TestBed.configureTestingModule({ providers: [provideHttpClient(), provideHttpClientTesting()] });
    const fixture = TestBed.createComponent(ModeImageScale);
    fixture.componentRef.setInput('groupId', 'g1');
    fixture.componentRef.setInput('modelId', 'm1');
    fixture.componentRef.setInput('version', 2);
    fixture.detectChanges();
    await settle();
    const nm = sampleModelVersion();
    // 60 columns at a = 0.5 mm: a 30 mm wide image; the bar is 5 mm.
    const mw = { ...nm, document: { ...nm.document, spacing: 0.5, material: undefined, physics: { kind: 'microwave', permittivity: 1, height: 5 } } };
    TestBed.inject(HttpTestingController).expectOne('/api/groups/g1/models/m1/versions/2').flush(mw);
    fixture.detectChanges();
    expect((fixture.nativeElement as HTMLElement).textContent).toContain('5 mm · image 30 mm wide');
  });
});
