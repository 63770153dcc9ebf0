// The models against the schema the migrations make (on real PostgreSQL): every attribute of every model is a
// column of its table, NULL where the model allows it and only there. The models are the typed access path to the
// tables, and the migrations, once landed, never change: a model that drifts from them fails here, not in a query.
import { describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { useMigratedDatabase } from './helpers';

const database = useMigratedDatabase('models');

describe('the models', () => {
	it('name only columns the migrations made, NULL where the schema allows it', async () => {
		const sequelize = database();
		const columns = await sequelize.query<{ table_name: string; column_name: string; is_nullable: 'YES' | 'NO' }>(
			`SELECT table_name, column_name, is_nullable FROM information_schema.columns WHERE table_schema = 'public'`,
			{ type: QueryTypes.SELECT }
		);
		const nullable = new Map(columns.map((c) => [`${c.table_name}.${c.column_name}`, c.is_nullable === 'YES']));
		const problems: string[] = [];
		const models = Object.values(sequelize.models);
		for (const model of models) {
			const table = model.getTableName();
			const tableName = typeof table === 'string' ? table : table.tableName;
			for (const [name, attribute] of Object.entries(model.getAttributes())) {
				const column = `${tableName}.${attribute.field ?? name}`;
				if (!nullable.has(column)) problems.push(`${model.name}.${name}: the schema has no column ${column}`);
				// a key is never NULL; any other attribute allows NULL unless it says otherwise (Sequelize's default)
				else if (!attribute.primaryKey && (attribute.allowNull ?? true) !== nullable.get(column))
					problems.push(`${model.name}.${name}: ${column} is ${nullable.get(column) ? '' : 'NOT '}NULL in the schema`);
			}
		}
		expect(problems).toEqual([]);
		expect(models.map((m) => m.name)).toContain('CycleEvent');
	});
});
