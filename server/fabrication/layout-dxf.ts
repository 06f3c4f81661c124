import { DxfWriter, LWPolylineFlags, Units, point2d } from '@tarikjabiri/dxf';
import type { DeviceLayout } from '../../shared/layout/device-layout.js';

/** AutoCAD colour index per layout layer, so layers are told apart on screen. */
const colours = [1, 3, 5, 2, 4, 6];

/**
 * The layout as DXF (through @tarikjabiri/dxf): drawing units nm ($INSUNITS 12), one DXF layer
 * per layout layer named like "L1-cavity-traced", each polygon a closed LWPOLYLINE.
 */
export function layoutDxf(layout: DeviceLayout): string {
  const dxf = new DxfWriter();
  dxf.setUnits(Units.Nanometers);
  layout.layers.forEach((l, k) => {
    const name = `L${l.layer}-${l.name}`;
    dxf.addLayer(name, colours[k % colours.length]!, 'CONTINUOUS');
    for (const ring of l.polygons) {
      dxf.addLWPolyline(
        ring.map(([x, y]) => ({ point: point2d(x, y) })),
        { flags: LWPolylineFlags.Closed, layerName: name },
      );
    }
  });
  return dxf.stringify();
}
