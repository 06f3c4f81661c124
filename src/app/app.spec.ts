import { Component } from '@angular/core';
import { TestBed } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import { RouterTestingHarness } from '@angular/router/testing';
import { App } from './app';

@Component({ template: '<main id="main" tabindex="-1">page</main>' })
class Page {}

describe('App', () => {
  it('carries the measurement note on every page and a skip link that focuses the main content', async () => {
    TestBed.configureTestingModule({ providers: [provideRouter([{ path: '**', component: Page }])] });
    const fixture = TestBed.createComponent(App);
    await RouterTestingHarness.create('/anything');
    await fixture.whenStable();
    const root = fixture.nativeElement as HTMLElement;
    expect(root.querySelector('footer')?.textContent).toContain(
      "Simulated figures are no substitute for measurement or for the fabrication line's own design rules.",
    );
    const skip = root.querySelector<HTMLAnchorElement>('a.skip-link')!;
    expect(skip.textContent).toContain('Skip to main content');
    expect(document.activeElement?.id).not.toBe('main');
    skip.click();
    expect(document.activeElement?.id).toBe('main');
  });
});
