// The kinds of training activity, pure (no Sequelize) so pages and schemas can read them.

export const DRILL_KINDS = ["predict", "spot", "fix", "order"] as const;
export type DrillKind = (typeof DRILL_KINDS)[number];
