import { DataTypes, Model, type CreationOptional, type ForeignKey, type InferAttributes, type InferCreationAttributes, type NonAttribute, type Sequelize } from "sequelize";
import type { Organisation } from "./organisation.ts";
import type { ApiTokenKind, ApiTokenScope } from "./api-token-words.ts";
import type { Role } from "./roles.ts";

export { API_TOKEN_KINDS, API_TOKEN_SCOPES, type ApiTokenKind, type ApiTokenScope } from "./api-token-words.ts";
import type { User } from "./user.ts";

/**
 * A bearer token for the REST API (docs/decisions/014): personal (acts with its owner's role in
 * the organisation at each call) or a service token (acts with the role chosen when it was made).
 * Only the SHA-256 of the secret is stored; tokens are revoked, never deleted.
 */
export class ApiToken extends Model<InferAttributes<ApiToken>, InferCreationAttributes<ApiToken>> {
  declare id: CreationOptional<string>;
  declare organisationId: ForeignKey<Organisation["id"]>;
  declare kind: ApiTokenKind;
  declare ownerUserId: string | null;
  /** A service token's role; null for a personal token. */
  declare role: Exclude<Role, "owner"> | null;
  declare name: string;
  declare scope: ApiTokenScope;
  declare tokenHash: string;
  /** The secret's first characters, shown in lists. */
  declare hint: string;
  declare ratePerMinute: CreationOptional<number>;
  declare expiresAt: Date;
  declare lastUsedAt: CreationOptional<Date | null>;
  declare lastUsedAddress: CreationOptional<string>;
  declare createdByUserId: string | null;
  declare createdByEmail: string;
  declare revokedAt: CreationOptional<Date | null>;
  declare revokedByEmail: CreationOptional<string | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
  declare owner?: NonAttribute<User>;
  declare organisation?: NonAttribute<Organisation>;

  static initModel(sequelize: Sequelize): void {
    ApiToken.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        kind: { type: DataTypes.STRING(16), allowNull: false },
        ownerUserId: { type: DataTypes.UUID, allowNull: true },
        role: { type: DataTypes.STRING(16), allowNull: true },
        name: { type: DataTypes.STRING(100), allowNull: false },
        scope: { type: DataTypes.STRING(8), allowNull: false },
        tokenHash: { type: DataTypes.STRING(64), allowNull: false, unique: true },
        hint: { type: DataTypes.STRING(24), allowNull: false },
        ratePerMinute: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 600, field: "rate_limit_per_minute" },
        expiresAt: { type: DataTypes.DATE, allowNull: false },
        lastUsedAt: { type: DataTypes.DATE, allowNull: true },
        lastUsedAddress: { type: DataTypes.STRING(64), allowNull: false, defaultValue: "" },
        createdByUserId: { type: DataTypes.UUID, allowNull: true },
        createdByEmail: { type: DataTypes.STRING(254), allowNull: false },
        revokedAt: { type: DataTypes.DATE, allowNull: true },
        revokedByEmail: { type: DataTypes.STRING(254), allowNull: true },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: "api_tokens", underscored: true },
    );
  }
}
