/** The geometry families the model list's `family` filter accepts (composite: a union or a subtraction). */
export const modelFamilies = ['rectangle', 'disk', 'ellipse', 'stadium', 'annulus', 'polygon', 'sites', 'bitmap', 'composite'];
