/** One entry of the side navigation: a group-scoped area of the product. */
interface Area {
  path: string;
  label: string;
  icon: string;
}

/** The areas in the order a lab works: design a cavity, search it, keep what was found, fit, fabricate. */
export const areas: readonly Area[] = [
  { path: 'dashboard', label: 'Dashboard', icon: 'space_dashboard' },
  { path: 'models', label: 'Models', icon: 'grid_on' },
  { path: 'runs', label: 'Runs', icon: 'play_circle' },
  { path: 'studies', label: 'Studies', icon: 'timeline' },
  { path: 'catalogue', label: 'Catalogue', icon: 'library_books' },
  { path: 'fits', label: 'Fits', icon: 'ssid_chart' },
  { path: 'review', label: 'Review', icon: 'rate_review' },
  { path: 'fabrication', label: 'Fabrication', icon: 'precision_manufacturing' },
  { path: 'members', label: 'Members', icon: 'group' },
];
