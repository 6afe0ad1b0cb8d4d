def test_convert_answers(client):
    response = client.post("/api/v1/convert", json={"quantity": "1 BCM/in2", "to": "cm3/m2"})
    assert response.status_code == 200
    assert response.get_json()["result"]["unit"] == "cm3/m2"
